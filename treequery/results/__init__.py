"""Results of a search and the ways to present them."""
