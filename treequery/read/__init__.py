"""Reading bracketed treebank files: brackets, Treebank II labels, file sources."""
