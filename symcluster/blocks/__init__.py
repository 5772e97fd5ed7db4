"""Symmetry-reduced exact blocks of a model.

``build`` (sectors -> lattice irreps
-> spin highest weights -> eta lowest weights -> LinearBlocks, read off the terms' action)
-> ``eigvec`` (closed-form eigenvectors of blocks of dimension <= 4).
"""
