"""The Lehmann sums behind :mod:`symcluster.response.greens`: poles and weight matrices of
G_ij for every pair of modes, the moments computed directly from the ensemble's states,
and the error bound of the weights (docs/greens.md, "How the numbers are certified").
"""

import flint
import mpmath
import sympy

from symcluster.errors import VerificationError
from symcluster.response.blockeig import BlockSector, block_sector, member_vectors, symmetrizer
from symcluster.response.exactweights import exact_weights
from symcluster.response.eigen import (arb_precision, ladder_matrix, to_arb, to_mpf, to_mpf_list,
                                       upper)

__all__ = ["lehmann_sums"]


def _neighbour(system, sector, s, d):
    u, v = sector
    new = (u + d, v) if s == 0 else (u, v + d)
    return new if min(new) >= 0 and system.has_sector(*new) else None


def _apply(ops, X_rows, n_out, cols):
    """Sparse ladder matrix (row, col, sign) times the columns ``cols`` of X (list of rows)."""
    out = flint.arb_mat(n_out, len(cols))
    for row, col, sign in ops:
        src = X_rows[col]
        for k, c in enumerate(cols):
            v = src[c]
            if sign > 0:
                out[row, k] = out[row, k] + v
            else:
                out[row, k] = out[row, k] - v
    return out


def _dots(A, B):
    """sum over all entries of A * B (two arb_mats of equal shape)."""
    total = flint.arb(0)
    a, b = A.tolist(), B.tolist()
    for ra, rb in zip(a, b):
        for x, y in zip(ra, rb):
            total += x * y
    return total


def lehmann_sums(system, ens, s):
    """Poles, weight matrices, direct moments and the certificate of G_ij (all modes) of
    spin ``s`` for an ensemble (see symcluster.response.greens for the conventions)."""
    space = system.space
    M = space.n_modes
    modes = range(M)
    prec_digits = system.work + 10
    poles = []              # (omega mpf, W M x M arb lists, bound, exact handle)
    zero = flint.arb(0)
    m0 = [[zero] * M for _ in modes]
    m1 = [[zero] * M for _ in modes]
    nn = [[zero] * M for _ in modes]
    hole_sum = [[zero] * M for _ in modes]
    bound = mpmath.mpf(ens.dropped) * 2
    # a symmetry block that the ladder operators provably do not reach (every
    # ||Pi_W c^(+)_m|a>||^2 below this) is not refined; its bound enters the certificate
    skip_below = 10.0 ** -(system.digits + 20) if system.digits < 280 else 0.0
    with arb_precision(prec_digits), mpmath.workdps(prec_digits):
        mu_a = flint.arb(0)
        if ens.mu:
            mu_a = to_arb(ens.mu)
        by_sector = {}
        for mem in ens.members:
            by_sector.setdefault(mem.sector, []).append(mem)
        for sec, mems in by_sector.items():
            eig = _members(system, sec, [m.space for m in mems])
            cols = [c for m in mems for c in m.space.columns]
            prob = {}
            for m in mems:
                for c in m.space.columns:
                    prob[c] = m
            Xa_rows = eig.rows
            Xsub = flint.arb_mat([[r[c] for c in cols] for r in Xa_rows])
            HXsub = eig.H * Xsub
            hx_rows = HXsub.tolist()
            pvec = [to_arb_prob(prob[c].prob) for c in cols]
            parts = {}
            for d in (1, -1):
                tgt = _neighbour(system, sec, s, d)
                if tgt is None:
                    parts[d] = None
                    continue
                teig = _target(system, tgt)
                nt = len(teig.states)
                ys, hys = [], []
                for m in modes:
                    ops = ladder_matrix(space, eig.states, teig.index, m, s, d > 0)
                    ys.append(_apply(ops, Xa_rows, nt, cols))
                    hys.append(_apply_rows(ops, hx_rows, nt, len(cols)))
                parts[d] = (tgt, teig, ys, hys)
            # direct moments from the states: <c_i c_j^+>, <c_j^+ c_i>, first moment
            for d, part in parts.items():
                if part is None:
                    continue
                tgt, teig, ys, hys = part
                Hy = [teig.H * y for y in ys]
                for i in modes:
                    for j in modes:
                        if d > 0:
                            # <a|c_i c_j^+|a> and <a|c_i H c_j^+|a> - <a|H c_i c_j^+|a>
                            a0 = _wdots(ys[i], ys[j], pvec)
                            a1 = _wdots(ys[i], Hy[j], pvec) - _wdots(hys[i], ys[j], pvec)
                        else:
                            # <a|c_j^+ c_i|a> and <a|c_j^+ c_i H|a> - <a|c_j^+ H c_i|a>
                            a0 = _wdots(ys[j], ys[i], pvec)
                            a1 = _wdots(ys[j], hys[i], pvec) - _wdots(ys[j], Hy[i], pvec)
                            nn[i][j] = nn[i][j] + a0
                        m0[i][j] = m0[i][j] + a0
                        m1[i][j] = m1[i][j] + a1 - mu_a * a0
            # poles: project onto the eigenspaces of the target sectors
            for d, part in parts.items():
                if part is None:
                    continue
                tgt, teig, ys, _ = part
                if isinstance(teig, BlockSector):
                    got, dropped = _block_poles(ens, teig, ys, mems, cols, d, M, hole_sum,
                                                skip_below, tgt)
                    poles.extend(got)
                    bound += dropped
                    continue
                Xt = teig.X.transpose()
                ts = [(Xt * y).tolist() for y in ys]      # <b|c^(+)_m|a>, rows b
                for mem in mems:
                    acols = [cols.index(c) for c in mem.space.columns]
                    p = to_arb_prob(mem.prob)
                    for B in teig.spaces:
                        W = [[zero] * M for _ in modes]
                        for i in modes:
                            ti = ts[i]
                            for j in range(i, M):
                                tj = ts[j]
                                acc = flint.arb(0)
                                for b in B.columns:
                                    rb_i, rb_j = ti[b], tj[b]
                                    for a in acols:
                                        acc += rb_i[a] * rb_j[a]
                                W[i][j] = W[j][i] = acc * p
                        if d > 0:
                            om = B.value - mem.space.value - ens.mu
                        else:
                            om = mem.space.value - B.value - ens.mu
                            for i in modes:
                                for j in modes:
                                    hole_sum[i][j] = hole_sum[i][j] + W[i][j]
                        err = mpmath.mpf(mem.prob) * (mem.space.eps * B.dim
                                                      + B.eps * (1 + mem.space.eta) * mem.space.dim)
                        poles.append((om, W, err, (mem, B, d, tgt)))
        omegas, exact, weights, werr, kept = _merge(system, ens, poles, M)
        exact_w = exact_weights(system, ens, kept, s, M, werr)
        conv = lambda mat: [[to_mpf(x) for x in row] for row in mat]  # noqa: E731
        m0m, m1m, nm, hm = conv(m0), conv(m1), conv(nn), conv(hole_sum)
        rad = max(upper(x.rad()) for mat in (m0, m1, nn) for row in mat for x in row)
    # members left out of a thermal ensemble (probability below 10**-(digits+25)) add
    # at most twice their probability to any weight
    cert = {"weight_error": mpmath.mpf(werr) + mpmath.mpf(rad) + bound,
            "pole_error": mpmath.mpf(10) ** (-system.work) * (float(system.scale) + 1),
            "eigenvector_error": system.worst_eps(),
            "ensemble": ens.describe(),
            "checks": []}
    return {"omegas": omegas, "exact": exact, "exact_weights": exact_w, "weights": weights,
            "m0": m0m, "m1": m1m,
            "n": nm, "hole_sum": hm, "certificate": cert, "n_modes": M}


def _target(system, tgt):
    """The eigenvectors of a target sector: block by block where the model has a lattice
    group (:mod:`symcluster.response.blockeig`), else (or when a block cannot separate
    two levels in float64) the whole sector refined."""
    if tgt in system._sectors:
        return system.sector(*tgt)
    if tgt not in system.block_sectors:
        lat = system.lattice()
        bs = None
        if lat is not None and len(lat.group.elements) > 1:
            bs = block_sector(system, lat, *tgt)
        system.block_sectors[tgt] = bs
    bs = system.block_sectors[tgt]
    return bs if bs is not None else system.sector(*tgt)


def _members(system, sec, spaces):
    """Certified vectors of the ensemble's eigenspaces in one sector: from one symmetry
    block each where possible (blockeig.member_vectors), else the sector's columns."""
    lat = system.lattice()
    key = (sec[0], sec[1])
    if lat is not None and len(lat.group.elements) > 1 and key not in system._sectors:
        got = member_vectors(system, lat, *sec, spaces)
        if got is not None:
            return got
    return system.vectors(*sec, spaces)


def _block_poles(ens, teig, ys, mems, cols, d, M, hole_sum, skip_below=0.0, tgt=None):
    """Poles into a block sector: the projections onto each block's eigenvectors,
    summed over the lattice group (blockeig's module docstring); and the bound of the
    weights of the blocks left out.

    A block W whose projector Pi_W takes every column y of Y = (c^(+)_m |a>) to
    ||Pi_W y||^2 <= nu contributes at most factor nu to any weight, summed over all its
    eigenspaces (|<y_i|Q_E|y_j>| <= ||Q_E y_i|| ||Q_E y_j||, Cauchy-Schwarz over E, and
    sum_E Q_E = Pi_W; the group average and the probabilities are convex sums): when
    factor nu <= ``skip_below`` the block is not refined and factor nu (plus the ensemble
    vectors' error over its columns) is returned in the bound (the selection rules of
    the lattice group make such blocks exactly zero)."""
    C = len(cols)
    nt = len(teig.states)
    ylists = [y.tolist() for y in ys]
    Y = flint.arb_mat([[v for m in range(M) for v in ylists[m][r]] for r in range(nt)])
    order = len(teig.group)
    acc = {}
    dropped = mpmath.mpf(0)
    for blk in teig.blocks:
        P = blk.BT * Y
        if skip_below > 0 and not blk.refined:
            nu = blk.projection_bound(P) * float(blk.factor) * (1 + 1e-12)
            if nu <= skip_below:
                # plus the ensemble vectors' own error over the block's k columns, as
                # the refined path counts it pole by pole
                k = blk.BT.nrows()
                dropped += nu + sum(float(blk.factor) * mpmath.mpf(mem.prob) * mem.space.eps
                                    * k for mem in mems)
                continue
        T = (blk.X.transpose() * P).tolist()
        f = flint.arb(flint.fmpq(blk.factor.numerator, blk.factor.denominator))
        for sp, bcols, eps, _ in blk.clusters:
            for mem in mems:
                key = (id(mem), id(sp))
                entry = acc.get(key)
                if entry is None:
                    entry = acc[key] = [mem, sp, [flint.arb(0)] * (M * M), mpmath.mpf(0)]
                V = entry[2]
                fp = f * to_arb_prob(mem.prob)
                for a in (cols.index(c) for c in mem.space.columns):
                    for b in bcols:
                        t = [T[b][m * C + a] for m in range(M)]
                        for i in range(M):
                            ti = fp * t[i]
                            for j in range(i, M):
                                V[i * M + j] += ti * t[j]
                entry[3] += float(blk.factor) * mpmath.mpf(mem.prob) * (
                    mem.space.eps * len(bcols) + eps * (1 + mem.space.eta) * mem.space.dim)
    if not acc:
        return [], dropped
    entries = list(acc.values())
    stack = flint.arb_mat(M * M, len(entries))
    for c, (_, _, V, _) in enumerate(entries):
        for i in range(M):
            for j in range(i, M):
                stack[i * M + j, c] = V[i * M + j]
                stack[j * M + i, c] = V[i * M + j]
    sym = (symmetrizer(teig.group, M) * stack).tolist()
    out = []
    for c, (mem, sp, _, err) in enumerate(entries):
        W = [[sym[i * M + j][c] / order for j in range(M)] for i in range(M)]
        if d > 0:
            om = sp.value - mem.space.value - ens.mu
        else:
            om = mem.space.value - sp.value - ens.mu
            for i in range(M):
                for j in range(M):
                    hole_sum[i][j] = hole_sum[i][j] + W[i][j]
        out.append((om, W, err, (mem, sp, d, tgt)))
    return out, dropped


def to_arb_prob(p):
    return to_arb(mpmath.mpf(p))


def _apply_rows(ops, rows, n_out, ncols):
    out = flint.arb_mat(n_out, ncols)
    for row, col, sign in ops:
        src = rows[col]
        for k in range(ncols):
            out[row, k] = out[row, k] + src[k] if sign > 0 else out[row, k] - src[k]
    return out


def _wdots(A, B, pvec):
    """sum_k p_k sum_r A[r, k] B[r, k] (the diagonal of one ball matrix product)."""
    P = A.transpose() * B
    total = flint.arb(0)
    for k, p in enumerate(pvec):
        total += p * P[k, k]
    return total


def _merge(system, ens, poles, M):
    """Poles merged where equal at the point; weights to mpf; the summed error bound; and
    per kept pole (omega, weights, the handles of the merged poles)."""
    tol = mpmath.mpf(10) ** (-(system.digits + 8)) * (float(system.scale) + abs(ens.mu) + 1)
    poles.sort(key=lambda p: p[0])
    merged = []
    for om, W, err, handle in poles:
        if merged and om - merged[-1][0] <= tol:
            prev = merged[-1]
            prev[1] = [[prev[1][i][j] + W[i][j] for j in range(M)] for i in range(M)]
            prev[2] += err
            prev[3].append(handle)
        else:
            merged.append([om, W, err, [handle]])
    omegas, exact, weights, kept = [], [], [], []
    worst = mpmath.mpf(0)
    cut = 10.0 ** (-(system.digits + 2))
    for om, W, err, handles in merged:
        flat = [x for row in W for x in row]
        rad = max(float(x.rad()) for x in flat) * (1 + 1e-12) + 1e-300
        worst = max(worst, err + rad)
        if max(upper(x) for x in flat) <= cut:      # every weight below 10**-(digits+2)
            continue
        vals = to_mpf_list(flat)
        omegas.append(+om)
        exact.append(_exact_omega(system, ens, handles[0]))
        weights.append([vals[i * M:(i + 1) * M] for i in range(M)])
        kept.append((om, weights[-1], handles))
    if worst > mpmath.mpf(10) ** (-(system.digits + 2)):
        raise VerificationError(f"Green's function weights are certified only to {float(worst):.1e}; "
                                f"more than the requested {system.digits} digits allow")
    return omegas, exact, weights, worst, kept


def _exact_omega(system, ens, handle):
    """omega as an exact sympy number where both levels are closed forms and mu is exact."""
    mem, B, d, _ = handle
    la, lb = mem.space.levels[0], B.levels[0]
    if not la.is_closed_form or not lb.is_closed_form or ens.mu_expr is None:
        return None
    pt = system.point
    ea = la.energy.subs(pt)
    eb = lb.energy.subs(pt)
    om = (eb - ea - ens.mu_expr) if d > 0 else (ea - eb - ens.mu_expr)
    return sympy.radsimp(om)
