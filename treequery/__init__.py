"""treequery: search, count and check constituency treebanks with a pattern language."""
from .api import Treebank
from .errors import (
    PatternCheckError,
    PatternError,
    PatternSyntaxError,
    SearchTimeout,
    TreebankFormatError,
    TreequeryError,
)
from .results.model import BoundNode, CountGroup, CountResult, Result

__all__ = [
    "Treebank",
    "Result",
    "BoundNode",
    "CountResult",
    "CountGroup",
    "TreequeryError",
    "TreebankFormatError",
    "PatternError",
    "PatternSyntaxError",
    "PatternCheckError",
    "SearchTimeout",
]
__version__ = "0.1.0"
