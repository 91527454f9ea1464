"""The pattern language: grammar and AST, checks, planner, SQL generation."""
