"""Outputs of a Spectrum: terminal text, LaTeX tables and JSON files.

Everything here depends only on the public Spectrum/Level API
(symcluster.spectrum); see docs/outputs.md for the layouts and the JSON schema.
"""

from symcluster.export.exprtree import from_tree, to_tree
from symcluster.export.jsonio import (dumps_spectrum, loads_spectrum, read_json, spectrum_to_dict,
                     write_json, write_text_atomic, write_texts_atomic, check_writable)
from symcluster.export.latex import latex_table
from symcluster.export.text import format_symmetries, format_sweep, format_table

__all__ = ["format_table", "format_sweep", "format_symmetries", "latex_table", "write_json", "read_json",
           "dumps_spectrum", "loads_spectrum", "spectrum_to_dict", "write_text_atomic",
           "write_texts_atomic", "check_writable",
           "to_tree", "from_tree"]
