"""Blocks whose exact results follow from another block's, and the closed forms one solve writes.

Three kinds of derived block, each found before the exact algebra runs:

* **gauge twins** (:func:`gauge_twins`): on a bipartite cluster the sublattice gauge
  transformation maps an odd-N block onto a block of another lattice irrep with
  ``t -> -t`` (a proof, see the function);
* **equal blocks** (:func:`equal_blocks`): equal matrices, entry for entry;
* **spectral twins** (:func:`spectral_twins`): blocks whose characteristic polynomial is
  another's with some couplings negated and the energy moved by an integer combination of
  the couplings, ``P_j(E, c) = P_i(E - sum_a s_a c_a, ±c)``.  On a bipartite Hubbard cluster
  the Shiba transformation (down spins to holes, with the sublattice sign) relates the
  spin-S, pseudospin-eta block to the spin-eta, pseudospin-S one with ``U -> -U``.  They
  are *found*, not proven: the two characteristic polynomials are compared exactly at a
  random point modulo a random 62-bit prime, for the sign patterns of at most
  :data:`TWIN_MAX_LABELS` couplings, with the shift read off the traces.

:func:`derived_blocks` runs the three searches on a solve's blocks (those with an exact
matrix).  The η members' levels, ``P(E - k * shift)`` for the k-th member, are made by
:class:`_Shifter` with the same composition (:func:`moved_terms`).

Every derived block is checked against its own matrix afterwards, like every other block
(:func:`symcluster.verify.blockpolys.verify_blocks`: its characteristic polynomial at random
points against the product of the derived factors), so a wrong derivation is an error, never
a result.
"""

import itertools
import random
from fractions import Fraction

import flint
import sympy

from symcluster.algebra.closed import add_shift, closed_forms
from symcluster.algebra.polydict import integer_dict, poly_from_dict
from symcluster.blocks.bloch import BlochBlock
from symcluster.blocks.build import _irrep_times_char
from symcluster.errors import VerificationError
from symcluster.numeric.implicit import ImplicitRoot, remember_terms
from symcluster.symbols import CONSTANT

__all__ = ["Written", "gauge_twins", "equal_blocks", "spectral_twins", "twin_image",
           "moved_terms", "derived_blocks", "TWIN_MIN_DIM", "TWIN_MAX_LABELS"]

#: Blocks below this dimension are solved directly: their algebra costs about as much as
#: the search for a twin (common practice, no source: measured on ring(8) and the ladder).
TWIN_MIN_DIM = 40
#: Spectral twins are searched for models with at most this many couplings (2^k sign
#: patterns per pair of blocks).
TWIN_MAX_LABELS = 3


class Written:
    """The closed forms written in one solve: by factor (its sorted terms), and the
    polynomial rings in the couplings whose expressions they share."""

    def __init__(self):
        self.by_factor = {}
        self.rings = {}


def _closed_forms_once(rep, gens, written=None):
    """:func:`closed_forms` of a factor, through ``written`` (a :class:`Written`) if given:
    a factor with the same terms gets the forms written for it before."""
    if written is None:
        return closed_forms(rep, gens)
    key = tuple(sorted(rep.items()))
    if key in written.by_factor:        # None (implicit roots) is kept as well
        return written.by_factor[key]
    out = written.by_factor[key] = closed_forms(rep, gens, rings=written.rings)
    return out


def gauge_twins(model, plan, blocks):
    """Blocks whose results follow from another block by t -> -t: {index: partner index}.

    On a bipartite cluster (detected exactly: the eta-pseudospin check needs every bond
    to join the two sublattices) the gauge transformation G = prod_{i in B} (-1)^{n_i}
    is diagonal in the Fock basis, commutes with N_up, N_dn, S+ and eta+, and maps
    H(t, U) to H(-t, U).  A lattice symmetry g that swaps the sublattices satisfies
    g G g^-1 = (-1)^N G, so for odd N, G maps the lattice irrep Gamma onto
    Gamma x chi_sub (chi_sub = -1 on swapping elements): the two blocks have the same
    characteristic polynomial up to t -> -t.  Every derived block is still checked
    against its own matrix by ``verify_blocks``.
    """
    if not plan.eta or not plan.sublattice_char or plan.lattice is None or plan.odd_labels is None:
        return {}
    index = {}
    for i, spec in enumerate(blocks):
        irrep = getattr(spec, "irrep", None)
        if irrep is not None:
            index[(spec.sector, irrep.label)] = i
    twins = {}
    for i, spec in enumerate(blocks):
        if i in twins or spec.labels["N"] % 2 == 0 or getattr(spec, "irrep", None) is None:
            continue
        partner = _irrep_times_char(plan.lattice, spec.irrep, plan.sublattice_char)
        if partner is None or partner.label == spec.irrep.label:
            continue
        j = index.get((spec.sector, partner.label))
        if j is not None and j > i and j not in twins and blocks[j].block.dim == spec.block.dim:
            twins[j] = i
    return twins


def _negate_couplings(factors, odd, written=None):
    """Factors and roots of a block after the substitution c -> -c for every c in `odd`.

    ``written`` (optional, the solve's :class:`Written`): the closed forms of a substituted
    factor met before are taken from it, and new ones are written into it.
    """
    out = []
    for fac, mult, roots in factors:
        gens = fac.gens
        flip = [g.name in odd for g in gens]
        old = integer_dict(fac)                  # the factors are integer Polys
        rep = {m: (-c if sum(e for e, f in zip(m, flip) if f) % 2 else c) for m, c in old.items()}
        if rep == old:
            # even in the flipped couplings: the factor, and so its closed forms (which are
            # built from its coefficients alone), are unchanged
            out.extend(_copy_factors([(fac, mult, roots)]))
            continue
        new = poly_from_dict(rep, gens, fac.domain)
        if roots and isinstance(roots[0], ImplicitRoot):
            remember_terms(new, rep)
        if roots and not isinstance(roots[0], ImplicitRoot):
            # the closed forms of the substituted factor, written afresh: cheaper than
            # substituting into the trees (xreplace rebuilds them with evaluation)
            forms = _closed_forms_once(rep, gens, written)
            if forms is not None and len(forms) == len(roots):
                out.append((new, mult, forms))
                continue
        sub = {g: -g for g, f in zip(gens, flip) if f}
        out.append((new, mult, [ImplicitRoot(new, r.index) if isinstance(r, ImplicitRoot)
                                else r.xreplace(sub) for r in roots]))
    return out


def _copy_factors(factors):
    """The same factors and roots with Poly objects of their own (sharing the exact
    representation): the verification counts the roots of each polynomial object."""
    out = []
    for fac, mult, roots in factors:
        new = sympy.Poly.new(fac.rep, *fac.gens)
        out.append((new, mult, [ImplicitRoot(new, r.index) if isinstance(r, ImplicitRoot)
                                else r for r in roots]))
    return out


def equal_blocks(blocks, skip=()):
    """Blocks whose matrix equals an earlier block's, entry for entry: {index: first index}.

    Their factors and roots are those of the first (copied, not solved again); every
    block is still checked against its own matrix by ``verify_blocks``.  ``skip`` holds
    indices to leave out (the gauge twins, derived otherwise).
    """
    first = {}
    out = {}
    for i, spec in enumerate(blocks):
        if i in skip:
            continue
        blk = spec.block
        key = (blk.dim, tuple(sorted((lab, tuple(sorted(m.items())))
                                     for lab, m in blk.terms.items())))
        j = first.setdefault(key, i)
        if j != i:
            out[i] = j
    return out




def _trace(block, label):
    return sum((v for (i, j), v in block.terms.get(label, {}).items() if i == j), Fraction(0))


def _charpoly_at(block, values, p):
    """``det(x - H)`` of `block` at the couplings `values` ({label: int}) modulo `p`."""
    n = block.dim
    M = flint.nmod_mat(n, n, p)
    for label, mat in block.terms.items():
        v = values[label]
        for (i, j), a in mat.items():
            a = Fraction(a)
            M[i, j] = int(M[i, j]) + v * a.numerator * pow(a.denominator, -1, p)
    return M.charpoly()


def spectral_twins(blocks, names, skip=(), seed=0):
    """Blocks whose characteristic polynomial follows from an earlier block's.

    Returns ``{j: (i, flipped, shift)}``: ``det(E - H_j)(c) = det(E - H_i)`` at the
    couplings ``c`` with the labels in ``flipped`` negated and ``E`` replaced by
    ``E - sum(shift[a] * c_a)`` (``shift``: {label: int}).  Block ``i`` is solved, never
    derived itself; blocks in ``skip`` (derived otherwise) and blocks below
    :data:`TWIN_MIN_DIM` are left out, and so are models with held couplings or more than
    :data:`TWIN_MAX_LABELS` couplings.  For a candidate pair (equal dimension) and sign
    pattern, the shift follows from ``tr H_j = tr H_i(±c) + n * shift``; only integer shifts
    are kept (the derived factors stay monic integer polynomials), and the two polynomials
    must agree exactly at one random point modulo a random 62-bit prime.  A false match has
    probability below ``n / 2**61``, and every block is checked against its own matrix
    after the algebra all the same (see the module docstring).

    Examples
    --------
    >>> from symcluster.algebra.block import LinearBlock
    >>> a = LinearBlock(2, {"t": {(0, 1): -1, (1, 0): -1}, "U": {(0, 0): 1}})
    >>> b = LinearBlock(2, {"t": {(0, 1): -1, (1, 0): -1}, "U": {(1, 1): 1}})
    >>> class Spec:                                   # what the pipeline's blocks carry
    ...     def __init__(self, block):
    ...         self.block = block
    >>> import symcluster.pipeline.derived as derived
    >>> derived.TWIN_MIN_DIM, old = 1, derived.TWIN_MIN_DIM
    >>> derived.spectral_twins([Spec(a), Spec(b)], ("t", "U"))   # equal spectra, no shift
    {1: (0, (), {'t': 0, 'U': 0})}
    >>> derived.TWIN_MIN_DIM = old
    """
    names = tuple(names)
    if CONSTANT in names or not names or len(names) > TWIN_MAX_LABELS:
        return {}
    rng = random.Random(seed ^ 0x7C1)
    p = flint.fmpz(rng.randrange(2 ** 61, 2 ** 62)) | 1
    while not p.is_prime():
        p += 2
    p = int(p)
    point = {lab: rng.randrange(1, p) for lab in names}
    patterns = [tuple(lab for lab, s in zip(names, signs) if s)
                for signs in itertools.product((False, True), repeat=len(names))]
    polys = {}

    def poly(i, flipped):
        key = (i, flipped)
        if key not in polys:
            vals = {lab: (p - v if lab in flipped else v) for lab, v in point.items()}
            polys[key] = _charpoly_at(blocks[i].block, vals, p)
        return polys[key]

    by_dim = {}
    for i, spec in enumerate(blocks):
        if i not in skip and spec.block.dim >= TWIN_MIN_DIM:
            by_dim.setdefault(spec.block.dim, []).append(i)
    traces = {i: {lab: _trace(blocks[i].block, lab) for lab in names}
              for group in by_dim.values() for i in group}
    twins = {}
    for n, group in by_dim.items():
        solved = []
        for j in group:
            tr_j = traces[j]
            found = None
            for i in solved:
                tr_i = traces[i]
                for flipped in patterns:
                    shift = {lab: (tr_j[lab] - (-tr_i[lab] if lab in flipped else tr_i[lab])) / n
                             for lab in names}
                    if any(s.denominator != 1 for s in shift.values()):
                        continue
                    shift = {lab: int(s) for lab, s in shift.items()}
                    moved = sum(s * point[lab] for lab, s in shift.items()) % p
                    # P_j(x) = P_i(x - moved) at the flipped point
                    if poly(i, flipped)(flint.nmod_poly([-moved % p, 1], p)) == poly(j, ()):
                        found = (i, flipped, shift)
                        break
                if found:
                    break
            if found:
                twins[j] = found
            else:
                solved.append(j)
    return twins


def moved_terms(fp, names, shift, flipped=()):
    """``fp(E - sum(shift[a] c_a), c with the labels in flipped negated)`` as ``{exponents:
    int}``, for an ``fmpz_mpoly`` in the generators ``(E, *names)`` of its context: the one
    composition behind the spectral twins and the eta members' energy shifts.

    Examples
    --------
    >>> ctx = flint.fmpz_mpoly_ctx.get(("x0", "x1", "x2"), "lex")
    >>> E, t, U = ctx.gens()
    >>> sorted(moved_terms(E**2 - U*E - 4*t**2, ["t", "U"], {"U": 1}, ("U",)).items())
    [((0, 2, 0), -4), ((1, 0, 1), -1), ((2, 0, 0), 1)]
    """
    x = fp.context().gens()
    moved = sum((s * x[1 + names.index(lab)] for lab, s in shift.items() if s),
                fp.context().from_dict({}))
    args = [x[0] - moved] + [-x[1 + k] if nm in flipped else x[1 + k]
                             for k, nm in enumerate(names)]
    image = fp.compose(*args)
    return dict(zip(image.monoms(), map(int, image.coeffs())))


def twin_image(factors, flipped, shift, written=None):
    """Factors and roots of a spectral twin (see :func:`spectral_twins`): each factor
    ``f(E, c)`` becomes ``f(E - sum(shift[a] c_a), c with the flipped labels negated)``, an
    irreducible integer polynomial, monic in E like ``f``; closed forms move alike, and an
    implicit root keeps its index (the order of the real roots is kept by the shift).

    Examples
    --------
    >>> E, t, U = sympy.symbols("E t U", real=True)
    >>> f = sympy.Poly(E**2 - U*E - 4*t**2, E, t, U)
    >>> roots = [U/2 - sympy.sqrt(U**2 + 16*t**2)/2, U/2 + sympy.sqrt(U**2 + 16*t**2)/2]
    >>> [(g.as_expr(), m) for g, m, _ in twin_image([(f, 1, roots)], ("U",), {"U": 1})]
    [(E**2 - E*U - 4*t**2, 1)]
    """
    out = []
    for fac, mult, roots in factors:
        gens = fac.gens
        ctx = flint.fmpz_mpoly_ctx.get(tuple(f"x{i}" for i in range(len(gens))), "lex")
        rep = moved_terms(ctx.from_dict(integer_dict(fac)), [g.name for g in gens[1:]],
                          shift, flipped)
        new = poly_from_dict(rep, gens, sympy.ZZ)
        if roots and not isinstance(roots[0], ImplicitRoot):
            forms = _closed_forms_once(rep, gens, written)
            if forms is None or len(forms) != len(roots):
                sub = {g: -g for g in gens[1:] if g.name in flipped}
                term = sum((shift.get(g.name, 0) * g for g in gens[1:]), sympy.Integer(0))
                forms = [add_shift(r.xreplace(sub), 1, term) for r in roots]
            out.append((new, mult, forms))
        else:
            remember_terms(new, rep)
            out.append((new, mult, [ImplicitRoot(new, r.index) for r in roots]))
    return out


class _Shifter:
    """``P(E) -> P(E - k*shift)`` for the eta members of one solve (python-flint composition).

    ``shift`` (the energy of one eta pair, linear in the couplings) is given as the
    sympy expression and as ``{coupling label: int}`` (the eta check's form); the
    factors are integer Polys in the generators ``(E, *couplings)``.
    """

    def __init__(self, shift, per_label=None):
        self.shift = shift
        self._none = shift is None or not per_label
        self._per_label = per_label or {}
        self._ctx = None
        # (poly.rep, its python-flint form): the k loop reuses it
        self._last = (None, None)
        self._made = {}                 # (id(poly.rep), k) -> (rep, the shifted Poly made
                                        # first): copies of a factor shift alike

    def _setup(self, gens):
        import flint
        self.gens = gens
        names = [g.name for g in gens[1:]]
        missing = [lab for lab in self._per_label if lab not in names]
        if missing:
            raise VerificationError(f"eta shift {self.shift} is not integral in {gens}")
        self._ctx = flint.fmpz_mpoly_ctx.get(tuple(f"x{i}" for i in range(len(gens))), "lex")
        self._names = names

    def __call__(self, poly, k):
        """``poly(E - k*shift)`` as a Poly in the same generators (``poly`` for k = 0)."""
        if k == 0 or self._none:
            return poly
        if self._ctx is None or poly.gens != self.gens:
            self._setup(poly.gens)
        rep = poly.rep
        hit = self._made.get((id(rep), k))
        if hit is not None and hit[0] is rep:
            # Polys sharing one representation (copies of a factor) shift alike; a Poly of
            # its own all the same: the verification counts roots by object
            return sympy.Poly.new(hit[1].rep, *hit[1].gens)
        last, fp = self._last
        if last is not rep:
            fp = self._ctx.from_dict(integer_dict(poly))
            self._last = (rep, fp)
        shifted = moved_terms(fp, self._names,
                              {lab: k * int(x) for lab, x in self._per_label.items()})
        made = remember_terms(poly_from_dict(shifted, poly.gens, sympy.ZZ), shifted)
        self._made[(id(rep), k)] = (rep, made)
        return made


def derived_blocks(model, plan, blocks, names, seed=0):
    """``(gauge twins, equal copies, spectral twins)`` of a solve's blocks, each a map
    from a block's index to what it is derived from (see :func:`gauge_twins`,
    :func:`equal_blocks`, :func:`spectral_twins`).  They are searched among the blocks
    with an exact matrix only: a block given by residues
    (:class:`~symcluster.blocks.bloch.BlochBlock`) has none to compare.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import build_blocks, plan_symmetries
    >>> m = sc.hubbard(sc.ring(4))
    >>> plan = plan_symmetries(m)
    >>> blocks = build_blocks(m, plan)
    >>> twins, copies, mirrored = derived_blocks(m, plan, blocks, m.labels)
    >>> all(blocks[i].block.dim == blocks[j].block.dim for i, j in twins.items())
    True
    """
    exact = [i for i, b in enumerate(blocks) if not isinstance(b.block, BlochBlock)]
    sub = [blocks[i] for i in exact]
    twins = gauge_twins(model, plan, sub)
    copies = equal_blocks(sub, skip=twins)
    mirrored = spectral_twins(sub, names, skip={**twins, **copies}, seed=seed)
    return tuple(_renumber(exact, found) for found in (twins, copies, mirrored))


def _renumber(index, found):
    """Derived-block maps of a sub-list, in the indices of the full list (``index``);
    the values may be a block index or a tuple whose first item is one."""
    out = {}
    for i, v in found.items():
        if isinstance(v, tuple):
            out[index[i]] = (index[v[0]],) + tuple(v[1:])
        else:
            out[index[i]] = index[v]
    return out
