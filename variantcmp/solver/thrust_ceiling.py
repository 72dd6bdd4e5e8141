"""The thrust ceiling at a fixed Mach: the highest altitude with the required residual climb.

It is the top root of the excess climb rate E(h) (:meth:`ClimbPhysics.excess`). Brackets,
cheapest first:

1. *Warm*: around a nearby speed's answer (the best-speed searches), in a window of the given
   half-width, with one look WARM_REACH windows further where both ends climb or neither does.
2. *Quick*: at the altitude where the Mach flies at CLmax, E is far past its peak (it falls with
   altitude there); stepping down through QUICK_CL_FRACTIONS of CL* (L/D max) finds a level that
   climbs. The excess has one hump (but for table engines, below), so the root between is the top one.
3. *Scan*: the rest (no climb at those levels, a Mach outside the thrust table) through
   SCAN_LEVELS_M, with a Brent look (in altitude, to RESCUE_TOL_M) for a narrow climbing window
   around the best scan level before a case is called unable to climb.

Roots: :func:`~variantcmp.solver.finders.illinois_root` to the given tolerance (``ROOT_TOL_M``,
about 0.01 ft, by default), with the layer bases as breaks (the climb rate jumps there, and a
ceiling often sits right on the tropopause).

Table engines interpolate linearly between table altitudes, so their E(h) can have several
humps. After a root, :func:`climbs_above` probes the table's altitudes (and midway) above it, up
to where the Mach flies at CLmax: a case that climbs at one takes the scan, which finds the
highest root. A probe is evaluated in full only where the climb rate without wave drag (the table's
own values there, a few products per probe) reaches the required rate: wave drag only lowers the
rate, so a probe that this drops cannot climb (exact; on the benchmark fleet it drops 99.8 % of
them). A warm window narrower than HUMP_CHECK_HALF_WIDTH_M skips the probes: over so small a
step in speed no higher hump appears from nothing.

Guarantees: a finite result has E >= 0 just below it and E < 0 just above (to the tolerance) and
nothing climbs above it up to CLmax (table engines: at the probes); NaN with CANNOT_CLIMB where no
level from the floor up climbs, THRUST_DATA_MACH where the Mach lies outside the thrust table
(PROPELLER_DATA_MACH: outside the propeller efficiency table),
THRUST_DATA_TOP where the case still climbs at the top of its thrust table; +inf above the model top.
"""

from __future__ import annotations

import numpy as np

from ..aero import pressure_climb_factor
from ..atmosphere import MODEL_TOP_M, isa_state, pressure_altitude_m, speed_of_sound_ms
from ..cases import FLOOR_M, FT, MODEL_CODES
from .finders import brent_max, illinois_root, nan_as_lowest
from .kinks import ALTITUDE_BREAKS_M
from .physics import ClimbPhysics, data_mach_flags
from .results import CANNOT_CLIMB, THRUST_DATA_TOP

#: Coarse altitude scan (m) bracketing the thrust ceiling: dense where aircraft fly.
SCAN_LEVELS_M = np.concatenate([
    [FLOOR_M], np.arange(0.0, 21_000.0, 1_000.0), [22_500.0, 25_000.0, 28_000.0, 32_000.0,
                                                   38_000.0, 47_000.0, 60_000.0, MODEL_TOP_M]])
QUICK_CL_FRACTIONS = (0.6, 0.4, 0.25, 0.12)  # of CL*, stepping down from CLmax to bracket the root
ROOT_TOL_M = 0.003  # about 0.01 ft: the answers' tolerance, well below what a planner reads (1 ft)
WARM_HALF_WIDTH_M = 250.0  # window around a nearby speed's thrust ceiling (a grid step moves it less, mostly)
WARM_REACH = 2.0  # a second look this many windows beyond a window that missed the root
HUMP_CHECK_HALF_WIDTH_M = 50.0  # warm windows at least this wide get the table-engine hump check
RESCUE_ITERATIONS, RESCUE_TOL_M = 40, 0.5  # Brent's search for a narrow climbing window between scan levels
TABLE_PROBES = 8  # table altitudes (or midway) probed above a root: a hump higher up is within them
MAY_CLIMB_MARGIN_MS = 1e-9  # rounding between the two evaluations of the climb rate


def _illinois(phys: ClimbPhysics, mach, a, b, fa, fb, tol):
    return illinois_root(phys.excess_family(mach), a, b, fa, fb, tol, breaks=ALTITUDE_BREAKS_M)


def thrust_ceiling_m(phys: ClimbPhysics, mach, guess_m=None, half_width_m=WARM_HALF_WIDTH_M, tol_m=ROOT_TOL_M):
    """Highest pressure altitude (m) with the required residual climb at a Mach, and flags.

    ``guess_m`` (the answer at a nearby speed, NaN where none): a warm bracket around it first;
    see the module docstring for the brackets, the hump check and the guarantees.
    """
    cs = phys.cases
    n = len(cs)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    if guess_m is not None:
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            a = np.clip(guess_m - half_width_m, cs.floor_m, top)
            b = np.clip(guess_m + half_width_m, cs.floor_m, top)
            fa, fb = phys.excess(a, mach), phys.excess(b, mach)
            # The root just outside the window (both ends climb, or neither): one look further
            # that way, WARM_REACH windows wide, before falling back to the cold start.
            up = (fa >= 0.0) & (fb >= 0.0) & (b < top)
            down = (fa < 0.0) & (fb < 0.0) & (a > cs.floor_m)
            ext = np.flatnonzero(np.isfinite(guess_m) & (up | down))
            if ext.size:
                u, reach = up[ext], WARM_REACH * 2.0 * np.broadcast_to(half_width_m, (n,))[ext]
                far = np.where(u, np.minimum(b[ext] + reach, top[ext]), np.maximum(a[ext] - reach, cs.floor_m[ext]))
                f_far = (phys if ext.size == n else phys.subset(ext)).excess(far, mach[ext])
                a[ext], fa[ext], b[ext], fb[ext] = (np.where(u, b[ext], far), np.where(u, fb[ext], f_far),
                                                    np.where(u, far, a[ext]), np.where(u, f_far, fa[ext]))
        warm = np.isfinite(guess_m) & (fa >= 0.0) & (fb < 0.0) & (b > a)
        if warm.any():
            result, flags = np.full(n, np.nan), np.zeros(n, dtype=np.int32)
            cold, hot = np.flatnonzero(~warm), np.flatnonzero(warm)
            if cold.size:
                result[cold], flags[cold] = thrust_ceiling_m(phys.subset(cold), mach[cold], tol_m=tol_m)
            sub = phys if hot.size == n else phys.subset(hot)
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                result[hot] = _illinois(sub, mach[hot], a[hot], b[hot], fa[hot], fb[hot], tol_m)
                # A tight window means a very close speed's answer: a higher hump cannot appear
                # from nothing over so small a step, so only wide windows get the look above.
                wide = np.broadcast_to(half_width_m, (n,))[hot] > HUMP_CHECK_HALF_WIDTH_M
                table = hot[(cs.model_code[hot] == MODEL_CODES["table"]) & wide]
                if table.size:
                    redo = table[climbs_above(phys.subset(table), mach[table], result[table],
                                              cl_max_altitude_m(phys, table, mach, top, result))]
                    if redo.size:
                        result[redo], flags[redo] = thrust_ceiling_m(phys.subset(redo), mach[redo], tol_m=tol_m)
            return result, flags
    qs = phys.qs_per_pm2 * mach * mach
    cl_star = np.sqrt(cs.cd0 / cs.k)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        b = np.clip(pressure_altitude_m(phys.w_n / (qs * cs.cl_max)), cs.floor_m, top)
        fb = phys.excess(b, mach)
        a, fa = b.copy(), fb.copy()
        # Step down in lift coefficient until the aircraft climbs; the last level that did not
        # climb closes the bracket from above.
        for fraction in QUICK_CL_FRACTIONS:
            open_ = np.flatnonzero(fa < 0.0)
            if open_.size == 0:
                break
            h = np.clip(pressure_altitude_m(phys.w_n[open_] / (qs[open_] * fraction * cl_star[open_])),
                        cs.floor_m[open_], top[open_])
            e = phys.subset(open_).excess(h, mach[open_]) if open_.size < n else phys.excess(h, mach)
            b[open_], fb[open_] = a[open_], fa[open_]
            a[open_], fa[open_] = h, e
    quick = (fa >= 0.0) & (fb < 0.0) & (b > a)
    result, flags = np.full(n, np.nan), np.zeros(n, dtype=np.int32)
    fast = np.flatnonzero(quick)
    if fast.size:
        sub = phys if fast.size == n else phys.subset(fast)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            result[fast] = _illinois(sub, mach[fast], a[fast], b[fast], fa[fast], fb[fast], tol_m)
        # Table engines: a case that still climbs somewhere above its root takes the scan.
        table = fast[cs.model_code[fast] == MODEL_CODES["table"]]
        if table.size:
            quick[table[climbs_above(phys.subset(table), mach[table], result[table], b[table], True)]] = False
    slow = np.flatnonzero(~quick)
    if slow.size:
        result[slow], flags[slow] = _scanned_thrust_ceiling_m(phys.subset(slow), mach[slow], tol_m)
    return result, flags


def cl_max_altitude_m(phys: ClimbPhysics, rows, mach, top, root):
    """The top of the table-engine hump check for the cases ``rows``: the altitude where the
    Mach flies at CLmax (far past the excess peak), within the thrust data, not below the root."""
    cs = phys.cases
    qs = phys.qs_per_pm2[rows] * mach[rows] ** 2
    at_cl_max = pressure_altitude_m(phys.w_n[rows] / (qs * cs.cl_max[rows]))
    return np.maximum(np.clip(at_cl_max, cs.floor_m[rows], top[rows]), root[rows])


def climbs_above(phys: ClimbPhysics, mach, root_m, top_m, top_known=False):
    """Whether each table-engine case climbs at a table altitude (or midway) between root and top.

    Up to TABLE_PROBES such altitudes per case, and the top itself unless ``top_known`` (the
    caller has seen it not climb). Most probes above a thrust ceiling fall short of the required
    climb rate even without wave drag (which only lowers it): that climb rate, from the table's
    own values at its altitudes and the atmosphere there, costs a few products per probe; only
    the probes it leaves, and the top, get the full excess climb rate, as one flat set.
    """
    cs = phys.cases
    out = np.zeros(len(cs), dtype=bool)
    for code, tid, group in phys.groups:
        if code != MODEL_CODES["table"]:
            continue
        rows = np.arange(len(cs))[group]
        table = cs.tables[tid]
        points_ft, fraction = table.probe_points()
        points = points_ft * FT
        root, top = root_m[rows], top_m[rows]
        pick = np.searchsorted(points, root + 1.0, side="left")[:, None] + np.arange(TABLE_PROBES)[None, :]
        k = np.minimum(pick, points.size - 1)
        who, which = np.nonzero((pick < points.size) & (points[k] < top[:, None]))
        if who.size:
            # The climb rate without wave drag at those probes (the climb equation of ClimbPhysics).
            case, node, m = rows[who], k[who, which], mach[rows[who]]
            j, ty = table.mach_terms(m)
            at = node * fraction.shape[1] + j
            thrust = fraction.ravel()[at] * (1.0 - ty) + fraction.ravel()[at + 1] * ty
            thrust *= phys.thrust_n[case]
            t_isa, p, lapse = (x[node] for x in isa_state(points))
            q_s = phys.qs_per_pm2[case] * m * m * p
            w = phys.w_n[case]
            thrust -= q_s * cs.cd0[case] + cs.k[case] * w * w / q_s
            t = t_isa + cs.isa_dev_c[case]
            rate = thrust * (m * speed_of_sound_ms(t) / w) * pressure_climb_factor(m, t, t_isa, lapse)
            with np.errstate(invalid="ignore"):
                keep = ~(rate < cs.climb_ms[case] - MAY_CLIMB_MARGIN_MS)  # NaN (no data): evaluated
            who, which = who[keep], which[keep]
        probes = points[k]
        if not top_known:
            tops = np.flatnonzero(top > root + 1.0)
            who, which = np.concatenate([who, tops]), np.concatenate([which, np.full(tops.size, TABLE_PROBES)])
            probes = np.hstack([probes, top[:, None]])
        if who.size == 0:
            continue
        sub = phys.subset(rows[who])
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            climbs = sub.excess(probes[who, which], mach[rows[who]]) >= 0.0
        out[rows[who[climbs]]] = True
    return out


def ceiling_below(phys: ClimbPhysics, rows, mach, altitude_m):
    """Of the table-engine cases ``rows``, those whose thrust ceiling at ``mach`` lies below an
    altitude (finite, inside the thrust table): the excess climb rate is negative there and at the
    hump check's probes above it up to where the speed flies at CLmax, so no hump rises higher.
    One evaluation and the probes, where a solve takes five or more."""
    cs = phys.cases
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    h = altitude_m[rows]
    with np.errstate(invalid="ignore"):
        rows = rows[np.isfinite(h) & (h >= cs.floor_m[rows]) & (h < top[rows])]
    if rows.size == 0:
        return rows
    sub = phys.subset(rows)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = sub.excess(altitude_m[rows], mach[rows])
    fall = np.flatnonzero(e < 0.0)  # NaN (no thrust data at this Mach) is solved as usual
    rows, sub = rows[fall], sub.subset(fall)
    if rows.size == 0:
        return rows
    return rows[~climbs_above(sub, mach[rows], altitude_m[rows], cl_max_altitude_m(phys, rows, mach, top, altitude_m))]


def _scanned_thrust_ceiling_m(phys: ClimbPhysics, mach, tol_m=ROOT_TOL_M):
    """Thrust ceiling bracketed by a coarse scan of altitudes (robust, slower)."""
    cs = phys.cases
    n = len(cs)
    flags = np.zeros(n, dtype=np.int32)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    levels = np.clip(SCAN_LEVELS_M[None, :], cs.floor_m[:, None], top[:, None])
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = phys.excess(levels, mach)
    unknown = np.isnan(e).all(axis=1)
    flags[unknown] |= data_mach_flags(cs.model_code[unknown])
    ok = e >= 0.0
    any_ok = ok.any(axis=1)
    last = levels.shape[1] - 1
    j = last - np.argmax(ok[:, ::-1], axis=1)
    rows = np.arange(n)
    a, fa = levels[rows, j], e[rows, j]

    # No scan level climbs: look for a narrow window around the best level before giving up.
    rescue = np.flatnonzero(~any_ok & ~unknown)
    if rescue.size:
        e_r = nan_as_lowest(e[rescue])
        jm = np.argmax(e_r, axis=1)
        around = np.clip(jm[:, None] + np.arange(-1, 2)[None, :], 0, last)  # the best level and its neighbours
        r = np.arange(rescue.size)[:, None]
        sub = phys.subset(rescue)
        m_sub = mach[rescue]
        peak_h, peak_e = brent_max(lambda i, x, guess, spread: nan_as_lowest(sub.subset(i).excess(x, m_sub[i])),
                                   levels[rescue][r, around], e_r[r, around], RESCUE_ITERATIONS, RESCUE_TOL_M)
        found = (peak_e >= 0.0) & (jm < last)
        fix = rescue[found]
        any_ok[fix] = True
        j[fix] = jm[found]  # the level above the peak does not climb
        a[fix], fa[fix] = peak_h[found], peak_e[found]

    result = np.full(n, np.nan)
    at_top = any_ok & (j == last)
    result[at_top & (cs.top_m >= MODEL_TOP_M)] = np.inf
    table_top = at_top & (cs.top_m < MODEL_TOP_M)
    flags[table_top] |= THRUST_DATA_TOP
    flags[~any_ok & ~unknown] |= CANNOT_CLIMB
    solve = np.flatnonzero(any_ok & ~at_top)
    if solve.size:
        b, fb = levels[solve, j[solve] + 1], e[solve, j[solve] + 1]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            root = _illinois(phys.subset(solve), mach[solve], a[solve], b, fa[solve], fb, tol_m)
        result[solve] = root
    return result, flags
