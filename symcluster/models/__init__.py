"""Models: a local space plus terms; the families; model files.

``terms`` (the operator builders and normal ordering) -> ``model`` (Model, validation)
-> ``families`` (hubbard, anderson, kanamori, heisenberg, t_j, with_field)
-> ``modelfile`` (TOML model files, docs/model-files.md).
"""

from .families import anderson, heisenberg, hubbard, kanamori, t_j, with_field
from .model import Model, make_model
from .modelfile import load_model_file, parse_model_toml
from .terms import Term

__all__ = ["Model", "make_model", "Term", "hubbard", "anderson", "kanamori", "heisenberg",
           "t_j", "with_field", "load_model_file", "parse_model_toml"]
