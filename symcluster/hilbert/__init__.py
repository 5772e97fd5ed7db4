"""States and operator actions: bit-mask states, local spaces, the term action, S and eta ladders.

``fock`` (bit-mask kernels) -> ``space`` (LocalSpace) -> ``ladder`` (S+-, eta+-) ->
``action`` (the compiled action of a model's terms, used by every stage but verification).
"""
