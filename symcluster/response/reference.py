"""Reference files for numerical codes: a self-describing JSON plus CSV tables.

A reference holds, for one model at one exact point, the values a quantum Monte Carlo,
DMRG, exact-diagonalisation or impurity-solver code compares most often, each to the
requested digits, with the certificate (how it was checked), the model and the
conventions (sign of t, units, mu, beta).  The JSON follows the published schema
``symcluster/response/reference.schema.json`` (format ``symcluster-reference``, version 1).

Tables (one CSV each, ``STEM_<table>.csv``, header line = column names):

* ``thermo``: T, energy, specific_heat, susceptibility, double_occupancy (per site);
* ``matsubara``: n, omega_n, re_G, im_G  (G_ij of one spin at omega_n = (2n + 1) pi/beta);
* ``tau``: tau, G  (G_ij(tau), 0 <= tau <= beta, tau = 0 meaning 0^+ and beta meaning beta^-).

Values are decimal strings with ``digits`` significant digits.
"""

import csv
import io
import json
import pathlib
from fractions import Fraction

import mpmath

from symcluster.errors import InputError, ModelError
from symcluster.parsing import read_input_file
from symcluster.response.greens import greens_matrix, mode_index, spin_index
from symcluster.response.ensemble import exact_number

__all__ = ["FORMAT", "VERSION", "SCHEMA_PATH", "build_reference", "reference_tables",
           "reference_texts", "load_reference", "schema"]

FORMAT = "symcluster-reference"
VERSION = 1
SCHEMA_PATH = pathlib.Path(__file__).with_name("reference.schema.json")
TABLES = {"thermo": ("T", ["energy", "specific_heat", "susceptibility", "double_occupancy"]),
          "matsubara": ("n", ["omega_n", "re_G", "im_G"]),
          "tau": ("tau", ["G"])}
#: largest table a reference writes (rows)
MAX_ROWS = 100_000


def schema():
    """The published JSON Schema of reference files (a dict)."""
    return json.loads(SCHEMA_PATH.read_text())


def _num(x, digits, work=30):
    """``x`` to ``digits`` significant digits; a value below 10**-(work + 2), the certified
    absolute error bound of the values computed at ``work`` digits, is written 0."""
    x = mpmath.chop(x, tol=mpmath.mpf(10) ** -(work + 2))
    return mpmath.nstr(x, digits, min_fixed=-5, max_fixed=5, strip_zeros=False) if x else "0"


def _frac_str(x):
    return f"{x.numerator}" if x.denominator == 1 else f"{x.numerator}/{x.denominator}"


def build_reference(spectrum, point, *, N=None, mu=None, temperature=None, beta=None,
                    temperatures=(), i=0, j=0, spin="up", n_matsubara=64, n_tau=33, digits=15):
    """The reference of a solved model at a point, as a JSON-ready dict.

    Parameters
    ----------
    spectrum : Spectrum
    point : dict
        ``{coupling: exact value}`` (every free coupling).
    N, mu, temperature : optional
        Ensemble of the Green's function (see :func:`symcluster.greens_function`).
    beta : number, optional
        Inverse temperature of the Matsubara and imaginary-time grids at T = 0 (default
        10); with a temperature it must be 1/T or left out.
    temperatures : sequence of numbers
        Grid of the thermodynamic table (canonical at N, or grand canonical at mu).
    i, j, spin
        The Green's function element.
    n_matsubara, n_tau : int
        Matsubara frequencies n = 0..n_matsubara-1; n_tau equally spaced tau in [0, beta].
    digits : int
        Significant digits of every value (certified).

    Returns
    -------
    dict

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> ref = build_reference(spec, {"t": 1, "U": 4}, N=2, temperatures=["1/2", 1], n_matsubara=3,
    ...                       n_tau=3, digits=12)
    >>> ref["tables"]["tau"]["rows"][0]           # G(0+) = -(1 - <n>) = -1/2
    ['0', '-0.500000000000']
    >>> ref["conventions"]["beta"]
    '10'
    """
    if isinstance(digits, bool) or not isinstance(digits, int) or not 1 <= digits <= 100:
        raise ModelError(f"digits={digits!r} must be an integer 1..100")
    for name, v in (("n_matsubara", n_matsubara), ("n_tau", n_tau)):
        if isinstance(v, bool) or not isinstance(v, int) or not 2 <= v <= MAX_ROWS:
            raise ModelError(f"{name}={v!r} must be an integer 2..{MAX_ROWS}")
    if len(temperatures) > MAX_ROWS:
        raise ModelError(f"{len(temperatures)} temperatures are more than {MAX_ROWS}")
    if temperature is not None:
        b = 1 / exact_number("temperature", temperature)
        if beta is not None and exact_number("beta", beta) != b:
            raise ModelError(f"beta={beta} differs from 1/temperature = {_frac_str(b)}; leave "
                             "beta out")
    else:
        b = exact_number("beta", beta) if beta is not None else Fraction(10)
        if b <= 0:
            raise ModelError(f"beta={beta} must be > 0")
    work = max(digits, 30)
    space = spectrum.model.space
    gm = greens_matrix(spectrum, point, spin=spin, N=N, temperature=temperature, mu=mu,
                       digits=work)
    mi, mj = mode_index(space, i), mode_index(space, j)
    g = gm.element(mi, mj)
    with mpmath.workdps(work + 10):
        bm = mpmath.mpf(b.numerator) / b.denominator
        gi = g.matsubara(b, n_matsubara)
        taus = [b * k / (n_tau - 1) for k in range(n_tau)]
        gt = g.imaginary_time(b, taus)
        mats_rows = [[str(n), _num((2 * n + 1) * mpmath.pi / bm, digits),
                      _num(v.real, digits, work),
                      _num(v.imag, digits, work)] for n, v in enumerate(gi)]
        tau_rows = [[_num(mpmath.mpf(t.numerator) / t.denominator, digits), _num(v, digits, work)]
                    for t, v in zip(taus, gt)]
        poles = [[_num(om, digits, work), _num(w, digits, work)] for om, w in g.poles]
    thermo_rows = []
    if temperatures:
        from symcluster.analysis.thermo import thermo_table
        inter = "U" if "U" in {s.name for s in spectrum.symbols} else None
        rows = thermo_table(spectrum, point, list(temperatures), n_electrons=N,
                            mus=(mu if mu is not None else 0,), digits=digits,
                            interaction=inter)
        # per site that carries the U term (the impurity of an Anderson model)
        L = max(1, len([t for t in spectrum.model.terms if t.kind == "hubbard_u"
                        and t.label == "U"]))
        for r in rows:
            t = exact_number("T", r["T"])
            thermo_rows.append([_num(mpmath.mpf(t.numerator) / t.denominator, digits)] + [_num(r[k], digits) for k in
                                                 ("energy", "specific_heat", "susceptibility")]
                               + [_num(r["double_occupancy"] / L, digits) if inter else "nan"])
    model = spectrum.model
    pt = spectrum.point(point)
    ref = {
        "format": FORMAT, "version": VERSION, "digits": digits,
        "model": {"name": model.name, "hamiltonian": model.hamiltonian_text(),
                  "n_sites": model.cluster.n_sites, "n_orbitals": space.n_orbitals,
                  "bonds": [[int(a), int(c), str(lab)] for a, c, lab in model.cluster.bonds],
                  "point": {s.name: str(v) for s, v in pt.items()},
                  "fixed": {k: str(v) for k, v in spectrum.fixed.items()}},
        "conventions": {
            "hamiltonian": "hopping enters as -t (c+_i c_j + h.c.) (docs/conventions.md); "
                           "energies in the units of the couplings; k_B = 1",
            "greens_function": "G_ij(tau) = -<T c_i(tau) c_j^+(0)>, one spin; "
                               "G(i omega_n) = sum_p w_p / (i omega_n - omega_p), "
                               "omega_n = (2n+1) pi / beta",
            "energies_from": "excitation energies are measured from mu (H - mu N)",
            "mu": _num(gm.mu, digits), "beta": _frac_str(b),
            "ensemble": gm.description,
            "element": {"i": mi, "j": mj, "spin": "up" if spin_index(spin) == 0 else "down",
                        "modes": "mode = site * n_orbitals + orbital"},
            "thermo": ("canonical at N=" + str(N)) if N is not None else
                      f"grand canonical at mu={mu}",
            "susceptibility": "d<N_up - N_dn>/dh for H - h (N_up - N_dn), = 4 x the "
                              "response of S^z_tot to a field coupling to S^z_tot",
            "double_occupancy": "per site carrying U: <sum_i U-term n_i up n_i dn> / (their "
                                "number) = (1/L_U) d<H>/dU"},
        "certificate": {
            "method": "exact levels from the verified spectrum; eigenvectors refined in ball "
                      "arithmetic and bounded by the Davis-Kahan theorem; sum rules checked",
            "weight_error": mpmath.nstr(g.certificate["weight_error"], 3),
            "checks": list(g.certificate["checks"]),
            "spectrum": spectrum.verification.summary()},
        "poles": poles,
        "tables": {
            "thermo": {"columns": ["T"] + TABLES["thermo"][1], "rows": thermo_rows},
            "matsubara": {"columns": ["n"] + TABLES["matsubara"][1], "rows": mats_rows},
            "tau": {"columns": ["tau", "G"], "rows": tau_rows}},
    }
    return ref


def reference_tables(ref):
    """``{table name: CSV text}`` of a reference dict (tables without rows left out)."""
    out = {}
    for name, table in ref["tables"].items():
        if not table["rows"]:
            continue
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(table["columns"])
        w.writerows(table["rows"])
        out[name] = buf.getvalue()
    return out


def reference_texts(ref, stem):
    """``[(path, text)]`` of the JSON and its CSV tables for ``stem`` (``stem.json``,
    ``stem_<table>.csv``), ready for :func:`symcluster.export.files.write_texts_atomic`."""
    stem = str(stem)
    if stem.endswith(".json"):
        stem = stem[:-5]
    files = [(stem + ".json", json.dumps(ref, indent=1) + "\n")]
    for name, text in reference_tables(ref).items():
        files.append((f"{stem}_{name}.csv", text))
    return files


def load_reference(path, max_bytes=50_000_000):
    """Read and check a reference JSON (format, version, tables); returns the dict.

    Raises
    ------
    InputError
        Not a file, not JSON, not a symcluster reference, or a table malformed.
    """
    text = read_input_file(path, "reference", max_bytes)
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"reference {str(path)!r} is not JSON ({exc.msg} at line {exc.lineno}); "
                         "give the .json file written by 'symcluster reference'") from None
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise InputError(f"{str(path)!r} is not a symcluster reference (format "
                         f"{FORMAT!r} expected)")
    if data.get("version") != VERSION:
        raise InputError(f"reference {str(path)!r} has version {data.get('version')!r}; this "
                         f"symcluster reads version {VERSION}")
    tables = data.get("tables")
    if not isinstance(tables, dict):
        raise InputError(f"reference {str(path)!r} has no tables")
    for name, table in tables.items():
        if (not isinstance(table, dict) or not isinstance(table.get("columns"), list)
                or not isinstance(table.get("rows"), list)
                or any(not isinstance(r, list) or len(r) != len(table["columns"])
                       for r in table["rows"])):
            raise InputError(f"reference {str(path)!r}: table {name!r} is malformed")
    return data
