"""Models shared by the Green's-function tests (built with symcluster's public builders)."""

import symcluster as sc
from symcluster.hilbert.space import LocalSpace
from symcluster.models import make_model
from symcluster.models.terms import hopping, hubbard_u, number_product, pair_hopping, spin_flip

__all__ = ["kanamori_dimer"]


def kanamori_dimer():
    """Two Kanamori atoms of two orbitals (mode = 2 site + orbital), U' = U - 2J, hopping t
    between equal orbitals; the same interaction as ``sc.kanamori(2)`` on each atom."""
    terms = []
    for site in (0, 1):
        a, b = 2 * site, 2 * site + 1
        terms += [hubbard_u(a, "U"), hubbard_u(b, "U")]
        for lab, scale in (("U", 1), ("J", -2)):
            terms += [number_product(a, 0, b, 1, lab, scale), number_product(a, 1, b, 0, lab, scale)]
        for s in (0, 1):
            for lab, scale in (("U", 1), ("J", -3)):
                terms.append(number_product(a, s, b, s, lab, scale))
        terms += [spin_flip(a, b, "J", -1), pair_hopping(a, b, "J")]
    terms += [hopping(0, 2, "t"), hopping(1, 3, "t")]
    return make_model(sc.chain(2), terms, LocalSpace("electrons", 2, n_orbitals=2),
                      name="kanamori-dimer")
