"""Scale benchmark tools: the corpus synthesiser and the million-tree benchmark (not tests)."""
