"""Sector selection: which levels a user asked for, and which blocks produce them.

A selection is a list of dicts, each naming quantum numbers with the names the levels
carry (``Level.quantum_numbers``): ``N``, ``S`` (where spin SU(2) is used) or ``Sz``
(where it is not), ``eta`` (where eta-pseudospin is used), ``k`` (the crystal momentum
as a multiple of pi, on clusters with translations) and ``irrep`` (the lattice label).
A level is selected when it matches every key of at least one dict; a block is built
only when at least one of the levels it produces (its eta and S^z members included)
is selected, so that the rest is never built.

The keys are checked twice: their form before anything is detected
(:func:`normalise_selection`), and whether the model's levels carry them and can take
the values once the symmetries are known (:func:`check_selection`).  Every problem is
an :class:`~symcluster.errors.InputError` with one line naming the value and the fix.
"""

from fractions import Fraction

import sympy

from symcluster.errors import InputError

__all__ = ["SELECTION_KEYS", "parse_sectors", "normalise_selection", "check_selection", "level_matches",
           "block_levels", "block_needed", "describe_selection", "momenta_of"]

#: The keys a selection may use (the names of the levels' quantum numbers).
SELECTION_KEYS = ("N", "S", "Sz", "eta", "k", "irrep")
_HALF = ("S", "Sz", "eta")


def _half_integer(key, value):
    """An integer or half-integer (sympy Rational) from an int, Fraction, Rational or text."""
    if isinstance(value, bool):
        raise InputError(f"sector {key}={value!r} is a boolean; give e.g. {key}=0 or {key}='1/2'")
    try:
        if isinstance(value, str):
            from symcluster.parsing import parse_number
            r = parse_number(value, f"sector {key}")
        elif isinstance(value, (int, Fraction)):
            r = sympy.Rational(value.numerator, value.denominator)
        elif isinstance(value, sympy.Rational):
            r = value
        else:
            raise TypeError
    except TypeError:
        raise InputError(f"sector {key}={value!r} is not an exact number; give e.g. {key}=0, "
                         f"{key}=1 or {key}='1/2'") from None
    if (2 * r).q != 1 or (key != "Sz" and r < 0):
        what = "a half-integer" if key == "Sz" else "0, 1/2, 1, 3/2, ..."
        raise InputError(f"sector {key}={value!r} is impossible: {key} takes {what}")
    return r


def _momentum(value):
    """The momentum k (a multiple of pi) as a Fraction in (-1, 1]."""
    if isinstance(value, bool):
        raise InputError(f"sector k={value!r} is a boolean; give k as a multiple of pi, "
                         "e.g. k=0, k=1 (pi) or k='2/5'")
    if isinstance(value, str):
        from symcluster.parsing import parse_number
        r = parse_number(value, "sector k (a multiple of pi)")
        r = Fraction(int(r.p), int(r.q))
    elif isinstance(value, (int, Fraction)):
        r = Fraction(value)
    elif isinstance(value, sympy.Rational):
        r = Fraction(int(value.p), int(value.q))
    else:
        raise InputError(f"sector k={value!r} is not an exact number; give k as a multiple of "
                         "pi, e.g. k=0, k=1 (pi) or k='2/5'")
    r = r % 2                       # k and k + 2 pi are the same momentum
    return r - 2 if r > 1 else r


def normalise_selection(sectors):
    """The selection in a normal form: a list of dicts of exact values.

    Parameters
    ----------
    sectors : list of dict
        Each dict maps keys of :data:`SELECTION_KEYS` to values: ``N`` an integer,
        ``S``, ``Sz``, ``eta`` integers or half-integers (ints, Fractions, sympy
        Rationals or texts such as ``"1/2"``), ``k`` a multiple of pi (``0``, ``1``,
        ``"2/5"``), ``irrep`` a lattice label such as ``"k=0,+"``.

    Returns
    -------
    list of dict
        ``N`` as int, ``S``/``Sz``/``eta`` as sympy Rationals, ``k`` as a Fraction
        in (-1, 1], ``irrep`` as str.

    Raises
    ------
    InputError
        An empty selection, a dict that is empty or not a dict, an unknown key, or a
        value of the wrong kind.

    Examples
    --------
    >>> normalise_selection([{"N": 10, "S": 0}, {"N": 9, "S": "1/2", "k": "0"}])
    [{'N': 10, 'S': 0}, {'N': 9, 'S': 1/2, 'k': Fraction(0, 1)}]
    >>> normalise_selection([{"n": 2}])
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: sector key 'n' is unknown; use N, S, Sz, eta, k, irrep
    """
    if isinstance(sectors, dict):
        sectors = [sectors]
    if isinstance(sectors, (str, bytes)) or not hasattr(sectors, "__iter__"):
        raise InputError(f"sectors={sectors!r} is not a list of dicts; give e.g. "
                         "sectors=[{'N': 2, 'S': 0}]")
    out = []
    for sel in sectors:
        if not isinstance(sel, dict):
            raise InputError(f"sector {sel!r} is not a dict; give e.g. {{'N': 2, 'S': 0}}")
        if not sel:
            raise InputError("an empty sector dict selects every level; leave out sectors= "
                             "to solve everything")
        norm = {}
        for key, value in sel.items():
            if key not in SELECTION_KEYS:
                raise InputError(f"sector key {key!r} is unknown; use "
                                 + ", ".join(SELECTION_KEYS))
            if key == "N":
                if isinstance(value, str) and value.strip().isdigit():
                    value = int(value)
                if isinstance(value, bool) or not isinstance(value, int) or value < 0:
                    raise InputError(f"sector N={value!r} is not an electron number; give an "
                                     "integer such as N=2")
                norm[key] = value
            elif key in _HALF:
                norm[key] = _half_integer(key, value)
            elif key == "k":
                norm[key] = _momentum(value)
            else:
                if not isinstance(value, str) or not value:
                    raise InputError(f"sector irrep={value!r} is not a lattice label; give a "
                                     "label as the levels print it, e.g. irrep='k=0,+'")
                norm[key] = value
        out.append(norm)
    if not out:
        raise InputError("sectors=[] selects nothing; give at least one dict such as "
                         "{'N': 2} or leave out sectors=")
    return out


#: Keys of the command line's grammar (irrep labels hold commas and spaces: Python API only).
TEXT_KEYS = ("N", "S", "Sz", "eta", "k")
#: Longest accepted --sectors text.
MAX_TEXT = 2000


def parse_sectors(text, option="--sectors"):
    """A selection from the command line's grammar ``N=10,S=0;N=9,S=1/2,k=0``.

    Groups are separated by ``;``, pairs within a group by ``,``; each pair is
    ``KEY=VALUE`` with KEY one of N, S, Sz, eta, k and VALUE a number of the
    command line's grammar (``1/2``; k a multiple of pi).  Nothing is evaluated.

    Raises
    ------
    InputError
        One line naming the bad part and the fix.

    Examples
    --------
    >>> parse_sectors("N=10,S=0;N=9,S=1/2,k=0")
    [{'N': 10, 'S': 0}, {'N': 9, 'S': 1/2, 'k': Fraction(0, 1)}]
    >>> parse_sectors("N=10,spin=0")
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: --sectors 'N=10,spin=0': key 'spin' is unknown; use N, S, Sz, eta, k (e.g. --sectors 'N=10,S=0;N=9,S=1/2,k=0')
    """
    example = "(e.g. --sectors 'N=10,S=0;N=9,S=1/2,k=0')"
    if len(text) > MAX_TEXT:
        raise InputError(f"{option} is {len(text)} characters long; give at most {MAX_TEXT}")
    groups = []
    for group in text.split(";"):
        if not group.strip():
            raise InputError(f"{option} {text!r}: an empty group; write KEY=VALUE pairs "
                             f"joined by ',' and groups joined by ';' {example}")
        sel = {}
        for pair in group.split(","):
            key, eq, value = pair.partition("=")
            key, value = key.strip(), value.strip()
            if not eq or not key or not value:
                raise InputError(f"{option} {text!r}: {pair.strip()!r} is not KEY=VALUE "
                                 f"{example}")
            if key not in TEXT_KEYS:
                raise InputError(f"{option} {text!r}: key {key!r} is unknown; use "
                                 + ", ".join(TEXT_KEYS) + f" {example}")
            if key in sel:
                raise InputError(f"{option} {text!r}: {key} is given twice in one group")
            if key == "N":
                if not value.isascii() or not value.isdigit() or len(value) > 6:
                    raise InputError(f"{option} {text!r}: N={value} is not an electron number; "
                                     "give an integer such as N=10")
                value = int(value)
            sel[key] = value
        groups.append(sel)
    return normalise_selection(groups)


def momenta_of(k):
    """A level's momentum label (sympy expression or tuple of them) as Fractions of pi.

    Examples
    --------
    >>> import sympy
    >>> momenta_of((-sympy.pi / 2, sympy.pi / 2)), momenta_of(sympy.Integer(0)), momenta_of(None)
    ((Fraction(-1, 2), Fraction(1, 2)), (Fraction(0, 1),), ())
    """
    if k is None:
        return ()
    ks = k if isinstance(k, tuple) else (k,)
    out = []
    for x in ks:
        r = sympy.nsimplify(x / sympy.pi) if x != 0 else sympy.Integer(0)
        out.append(Fraction(int(r.p), int(r.q)))
    return tuple(out)


def level_matches(selection, qn):
    """True if quantum numbers ``qn`` (a level's) match at least one dict of the selection.

    Examples
    --------
    >>> import sympy
    >>> sel = normalise_selection([{"N": 2, "S": 0}])
    >>> level_matches(sel, {"N": 2, "S": sympy.Integer(0)}), level_matches(sel, {"N": 2, "S": 1})
    (True, False)
    """
    for sel in selection:
        for key, want in sel.items():
            if key == "k":
                if want not in momenta_of(qn.get("k")):
                    break
            elif qn.get(key) != want:
                break
        else:
            return True
    return False


def block_levels(plan, n_sites, sector, irrep, has_charge=True):
    """The quantum numbers of the levels one block would give (before it is built).

    The same labels as the solve writes: ``N`` of each eta member, ``S`` or ``Sz``
    (and the S^z members in a field), ``eta``, the lattice ``irrep`` of each member
    (moved by the sublattice character for odd eta steps) and its momentum ``k``.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import plan_symmetries
    >>> plan = plan_symmetries(sc.hubbard(sc.chain(2)), lattice=False)
    >>> [qn["N"] for qn in block_levels(plan, 2, (1, 1), None)]    # eta = 0: N = 2 only
    [2]
    >>> [(qn["N"], qn["eta"]) for qn in block_levels(plan, 2, (0, 0), None)]
    [(0, 1), (2, 1), (4, 1)]
    """
    from symcluster.blocks.build import eta_member_irrep
    n_up, n_dn = sector
    n = n_up + n_dn
    members = n_sites - n + 1 if plan.eta else 1
    out = []
    for k in range(members):
        qn = {"N": n + 2 * k} if has_charge else {}
        two_s = n_up - n_dn
        if plan.spin:
            qn["S"] = sympy.Rational(two_s, 2)
        else:
            qn["Sz"] = sympy.Rational(two_s, 2)
        if plan.eta:
            qn["eta"] = sympy.Rational(n_sites - n, 2)
        irr = eta_member_irrep(plan, irrep, k) if k else irrep
        if irrep is not None:
            qn["irrep"] = irr.label if irr is not None else irrep.label + "*"
            mom = getattr(irr, "momentum", None) if irr is not None else None
            if mom is not None:
                qn["k"] = mom
        if plan.spin_split:
            for j in range(two_s + 1):
                out.append(dict(qn, Sz=qn["S"] - j))
        else:
            out.append(qn)
    return out


def block_needed(selection, plan, n_sites, sector, irrep, has_charge=True):
    """True if a block (sector, lattice irrep or None) gives at least one selected level.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import plan_symmetries
    >>> plan = plan_symmetries(sc.hubbard(sc.chain(2)), lattice=False)
    >>> sel = normalise_selection([{"N": 4}])
    >>> block_needed(sel, plan, 2, (0, 0), None), block_needed(sel, plan, 2, (1, 1), None)
    (True, False)
    """
    return any(level_matches(selection, qn)
               for qn in block_levels(plan, n_sites, sector, irrep, has_charge))


def check_selection(selection, space, plan):
    """Refuse keys the model's levels do not carry and values they cannot take.

    Parameters
    ----------
    selection : list of dict
        From :func:`normalise_selection`.
    space : LocalSpace
    plan : SymmetryPlan

    Raises
    ------
    InputError
        One line naming the key or value and what the model's levels carry.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import plan_symmetries
    >>> model = sc.hubbard(sc.chain(2))
    >>> plan = plan_symmetries(model, spin=False)
    >>> check_selection(normalise_selection([{"N": 2, "S": 0}]), model.space, plan)
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: sector N=2,S=0: these levels carry no S (spin SU(2) was not found or is switched off); select by Sz instead
    """
    sectors = [s for s in space.sectors() if space.sector_dim(*s) > 0]
    irreps = plan.lattice.irreps if plan.lattice is not None else []
    labels = [r.label for r in irreps]
    momenta = sorted({m for r in irreps for m in momenta_of(getattr(r, "momentum", None))})
    L = space.n_modes
    for sel in selection:
        text = describe_selection([sel])
        if "N" in sel and not space.has_charge:
            raise InputError(f"sector {text}: a spin model has no electron number; leave N out")
        if "N" in sel and sel["N"] not in space.particle_numbers():
            top = space.max_particles
            raise InputError(f"sector {text}: N={sel['N']} is impossible on {space.n_sites} "
                             f"sites; choose 0..{top}")
        if "S" in sel and not plan.spin:
            raise InputError(f"sector {text}: these levels carry no S (spin SU(2) was not found "
                             "or is switched off); select by Sz instead")
        if "Sz" in sel and plan.spin and not plan.spin_split:
            raise InputError(f"sector {text}: these levels carry S, not Sz (each level is a "
                             "whole spin multiplet); select by S instead")
        if "eta" in sel and not plan.eta:
            raise InputError(f"sector {text}: these levels carry no eta (eta-pseudospin was not "
                             "found or is switched off); leave eta out")
        if ("k" in sel or "irrep" in sel) and plan.lattice is None:
            raise InputError(f"sector {text}: these levels carry no lattice label (no lattice "
                             "symmetry found or it is switched off); leave k and irrep out")
        if "k" in sel and not momenta:
            raise InputError(f"sector {text}: this cluster's group has no translations, so the "
                             "levels carry no momentum k; select by irrep (one of "
                             + ", ".join(labels) + ")")
        if "k" in sel and sel["k"] not in momenta:
            raise InputError(f"sector {text}: k={_pi(sel['k'])} is not a momentum of this "
                             "cluster; choose one of " + ", ".join(_pi(m) for m in momenta))
        if "irrep" in sel and sel["irrep"] not in labels:
            raise InputError(f"sector {text}: irrep {sel['irrep']!r} is not a label of this "
                             "cluster; choose one of " + ", ".join(labels))
        # N and S (or Sz) together: some sector must hold such states (S = Sz for the
        # highest weight)
        n = sel.get("N")
        two_s = 2 * sel["S"] if "S" in sel else 2 * sel["Sz"] if "Sz" in sel else None
        if not any((n is None or u + d == n) and (two_s is None or u - d == two_s)
                   for u, d in sectors):
            raise InputError(f"sector {text} is impossible: no states of "
                             f"{space.describe()} have these quantum numbers")
        if "eta" in sel:
            two_eta = 2 * sel["eta"]
            if two_eta > L or (n is not None and (abs(n - L) > two_eta
                                                   or (two_eta - abs(n - L)) % 2)):
                raise InputError(f"sector {text} is impossible: eta={sel['eta']} needs N in "
                                 f"{L - two_eta}..{L + two_eta} in steps of 2")


def _pi(r):
    """A multiple of pi as text: 0, 1 (pi), 2/5."""
    return str(r.numerator) if r.denominator == 1 else f"{r.numerator}/{r.denominator}"


def describe_selection(selection):
    """The selection as text in the command line's grammar: ``N=10,S=0;N=9,S=1/2,k=0``.

    Examples
    --------
    >>> describe_selection(normalise_selection([{"N": 10, "S": 0}, {"N": 9, "k": "-1/5"}]))
    'N=10,S=0;N=9,k=-1/5'
    """
    parts = []
    for sel in selection:
        items = []
        for key in SELECTION_KEYS:
            if key in sel:
                v = sel[key]
                items.append(f"{key}={_pi(v) if key == 'k' else v}")
        parts.append(",".join(items))
    return ";".join(parts)
