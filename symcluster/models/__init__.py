"""Models: a local space plus terms; the families; model files.

``terms`` (the operator builders and normal ordering) -> ``model`` (Model, validation)
-> ``families`` (hubbard, anderson, kanamori, heisenberg, t_j, with_field)
-> ``modelfile`` (TOML model files, docs/model-files.md).
"""

from symcluster.models.families import anderson, heisenberg, hubbard, kanamori, t_j, with_field
from symcluster.models.model import Model, make_model
from symcluster.models.modelfile import load_model_file, parse_model_toml
from symcluster.models.terms import Term

__all__ = ["Model", "make_model", "Term", "hubbard", "anderson", "kanamori", "heisenberg",
           "t_j", "with_field", "load_model_file", "parse_model_toml"]
