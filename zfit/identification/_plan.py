"""Plan a measurement: which connection resolves which parameter, before the bench.

The part's equivalent circuit is simulated through each way of measuring it
(network analyser in reflection, shunt-thru and series-thru, and an
impedance-analyser table of stated accuracy) by the one simulated measurement
(`zfit.fit._simulate`), with the same noise model the readers give real
files (`zfit.data._connection.InstrumentNoise`), and identified
by the same `zfit.identify`.  For each connection the plan gives the
expected standard uncertainty of every parameter, its resolution limit
(`zfit.fit._fisher`), and a recommendation.

Expected uncertainty
    The Cramer-Rao bound: the inverse Fisher information of the sweep's
    noise at the part's true values, over the points the identification
    uses (its fit band).  A weighted least-squares fit whose weights are the
    true noise reaches it to first order, which is what the identification
    does; the Monte Carlo test checks that it does (tests/test_plan.py).
    The identification is run on one seeded noisy simulation of each
    connection: that gives the fit band, its warnings and the uncertainty
    it would report on such a measurement (``std_reported``).

Recommendation
    The connection that resolves the most parameters (relative uncertainty
    below 1/3, the resolution rule); among equals, the one with the smallest
    geometric mean of the relative uncertainties (each capped at 1, so that
    a parameter no connection resolves does not decide).

References
----------
.. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing: Estimation
   Theory*, Prentice Hall, 1993, ch. 3 (Cramer-Rao bound; from memory).
.. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 4.3-4.4.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from ..data._connection import NA_CONNECTIONS, InstrumentNoise
from ..data._sweep import ELEMENT_RANGES
from ..fit._simulate import SIMULATED_CONNECTIONS, simulated_sweep
from ..io._sweep_file import S_NOISE_DEFAULT, TABLE_NOISE_DEFAULT
from .._parameters import OPTIONAL_KEY, REQUIRED_KEYS, UNITS
from .._errors import FitError, ZfitInputError
from .._units import bounded, format_eng

__all__ = [
    "PLAN_CONNECTIONS",
    "NA_NOISE_DEFAULT",
    "TABLE_ACCURACY_DEFAULT",
    "PlannedParameter",
    "ConnectionPlan",
    "Plan",
    "plan_measurement",
    "impedance_range",
]

#: The connections the planner compares; ``impedance`` is the analyser table.
PLAN_CONNECTIONS = SIMULATED_CONNECTIONS

#: Network-analyser noise on S: the readers' default for S-parameter files
#: (`zfit.io._sweep_file.S_NOISE_DEFAULT`), one constant for both.
NA_NOISE_DEFAULT = S_NOISE_DEFAULT

#: The analyser table's stated accuracy: the readers' default for tables
#: (`zfit.io._sweep_file.TABLE_NOISE_DEFAULT`: 0.1 % of |Z| plus 0.1 mohm), so
#: that a plan predicts what `zfit identify` would report on the file.  An
#: analyser whose compensated short leaves milliohms is planned with
#: ``table_accuracy`` (``--table-floor``).
TABLE_ACCURACY_DEFAULT = TABLE_NOISE_DEFAULT

_LABEL = {"impedance": "analyser table"}
_SCHEMA = "zfit.plan/1"


def label(connection: str) -> str:
    """Return the name of a connection as the plan prints it.

    Parameters
    ----------
    connection : str
        One of `PLAN_CONNECTIONS`.
    """
    return _LABEL.get(connection, connection)


@dataclass(frozen=True)
class PlannedParameter:
    """What one connection is expected to give for one parameter.

    Attributes
    ----------
    key : str
        Parameter name (``"ESR"``).
    value : float
        The part's value as planned, SI units.
    unit : str
        Its unit.
    std : float
        Expected standard uncertainty (Cramer-Rao bound over the fit band);
        ``inf`` when the sweep does not determine it.
    relative_std : float
        ``std / value``.
    resolved : bool
        Whether the value is at or beyond the resolution limit.
    resolution_limit : float or None
        The resolution limit (`zfit.fit._fisher`): the smallest resolvable
        value, or the largest for ``R_p`` and ``R_leak``; None when none
        is reached within 15 decades.
    std_reported : float or None
        The uncertainty the identification reported on the seeded simulated
        measurement, None when it failed.
    estimate : float or None
        The value the identification found on it.
    """

    key: str
    value: float
    unit: str
    std: float
    relative_std: float
    resolved: bool
    resolution_limit: float | None
    std_reported: float | None = None
    estimate: float | None = None

    def to_dict(self) -> dict:
        """Return the JSON object of this parameter (non-finite numbers as null)."""
        def num(x):
            return None if x is None or not math.isfinite(x) else float(x)

        return {
            "value": self.value, "unit": self.unit, "std": num(self.std), "relative_std": num(self.relative_std),
            "resolved": bool(self.resolved), "resolution_limit": num(self.resolution_limit),
            "std_reported": num(self.std_reported), "estimate": num(self.estimate),
        }


@dataclass(frozen=True)
class ConnectionPlan:
    """The plan of one connection.

    Attributes
    ----------
    connection : str
        One of `PLAN_CONNECTIONS`.
    noise : InstrumentNoise
        Its noise model (on S for the analyser connections, on Z for the table).
    parameters : mapping
        ``{key: PlannedParameter}``.
    fit_band_hz : tuple of float
        The band the identification used.
    topology : str or None
        The circuit the identification found on the simulated measurement.
    warnings : tuple of str
        The identification's warnings, the connection's conditioning warning.
    error : str or None
        Why the identification failed on the simulated measurement, if it did.
    srf_std_hz : float or None
        Expected standard uncertainty of the self-resonant frequency (first
        order through the same covariance), None without a resonance.
    determined_ohm : mapping
        ``{key: (low, high)}``: the part's |Z| over the points that carry
        the central 80 % of each parameter's Fisher information (where in
        impedance the sweep determines it), ohm.
    """

    connection: str
    noise: InstrumentNoise
    parameters: "MappingProxyType[str, PlannedParameter]"
    fit_band_hz: tuple
    topology: str | None = None
    srf_std_hz: float | None = None
    warnings: tuple = ()
    error: str | None = None
    determined_ohm: "MappingProxyType[str, tuple]" = field(default_factory=lambda: MappingProxyType({}))

    @property
    def label(self) -> str:
        """The connection's printed name."""
        return label(self.connection)

    @property
    def n_resolved(self) -> int:
        """How many parameters it resolves."""
        return sum(p.resolved for p in self.parameters.values())

    @property
    def score(self) -> float:
        """Geometric mean of the relative uncertainties, each capped at 1 (smaller is better)."""
        rel = [min(p.relative_std, 1.0) if math.isfinite(p.relative_std) else 1.0 for p in self.parameters.values()]
        return float(math.exp(np.mean(np.log(np.maximum(rel, 1e-12))))) if rel else 1.0

    @property
    def worst(self) -> PlannedParameter:
        """The parameter it gets least well (largest relative uncertainty)."""
        return max(self.parameters.values(), key=lambda p: p.relative_std if math.isfinite(p.relative_std) else math.inf)

    def to_dict(self) -> dict:
        """Return the JSON object of this connection."""
        return {
            "label": self.label,
            "noise": {"rel": self.noise.rel, "floor": self.noise.floor, "on": "S" if self.connection in NA_CONNECTIONS else "Z"},
            "parameters": {k: p.to_dict() for k, p in self.parameters.items()},
            "resolved": self.n_resolved,
            "score": self.score,
            "fit_band_hz": list(self.fit_band_hz),
            "srf_std_hz": None if self.srf_std_hz is None or not math.isfinite(self.srf_std_hz) else self.srf_std_hz,
            "topology": self.topology,
            "warnings": list(self.warnings),
            "error": self.error,
        }


@dataclass(frozen=True)
class Plan:
    """A measurement plan: every connection's expected result and a recommendation.

    Attributes
    ----------
    model : {'inductor', 'capacitor'}
        The kind of part.
    params : mapping
        The part's values, SI units.
    topology : str
        Its equivalent circuit.
    srf_hz : float or None
        Its self-resonant frequency.
    band_hz : tuple of float
        The swept band.
    points : int
        Points of the sweep (log-spaced).
    reference_ohm : float
        The analyser's reference impedance.
    connections : tuple of ConnectionPlan
        In the order of `PLAN_CONNECTIONS` (those planned).
    ranking : tuple of str
        Connections from best to worst.
    recommended : str
        The best connection.
    reason : str
        Why, in one sentence with numbers.
    notes : tuple of str
        The assumptions the plan rests on, in words.
    """

    model: str
    params: "MappingProxyType[str, float]"
    topology: str
    srf_hz: float | None
    band_hz: tuple
    points: int
    reference_ohm: float
    connections: tuple
    ranking: tuple
    recommended: str
    reason: str
    notes: tuple = field(default=())

    def connection(self, name: str) -> ConnectionPlan:
        """Return the plan of connection `name` (``"analyser table"`` or ``"impedance"`` for the table).

        Parameters
        ----------
        name : str
            Connection name.
        """
        for c in self.connections:
            if name in (c.connection, c.label):
                return c
        raise KeyError(name)

    def to_dict(self) -> dict:
        """Return the ``zfit.plan/1`` JSON object (SI units, floats as numbers)."""
        from .._version import __version__

        return {
            "schema": _SCHEMA,
            "zfit_version": __version__,
            "model": self.model,
            "topology": self.topology,
            "parameters": dict(self.params),
            "srf_hz": self.srf_hz,
            "band_hz": list(self.band_hz),
            "points": self.points,
            "reference_ohm": self.reference_ohm,
            "connections": {c.connection: c.to_dict() for c in self.connections},
            "ranking": list(self.ranking),
            "recommended": self.recommended,
            "reason": self.reason,
            "notes": list(self.notes),
        }


def _check_params(model, params):
    if model not in REQUIRED_KEYS:
        raise ZfitInputError(f"unknown model {model!r}; use inductor or capacitor")
    out = {}
    for k in REQUIRED_KEYS[model] + (OPTIONAL_KEY[model],):
        v = params.get(k)
        if v is None:
            if k in REQUIRED_KEYS[model]:
                raise ZfitInputError(f"a {model} plan needs --{k} (the part's expected value)")
            continue
        # The values zfit computes with (ELEMENT_RANGES): beyond them s L or 1/(s C) overflows.
        out[k] = bounded(v, f"--{k}", *ELEMENT_RANGES[UNITS[k]], unit=UNITS[k])
    extra = set(params) - set(out) - {k for k, v in params.items() if v is None}
    if extra:
        raise ZfitInputError(f"a {model} has no parameter {', '.join(sorted(extra))}")
    return out


#: Upper limit of `plan_measurement`'s points: analysers sweep at most some
#: ten to twenty thousand points (from memory); more only costs time.
MAX_POINTS = 100_001


def plan_measurement(
    model: str,
    params,
    band=(1e3, 1e9),
    *,
    points: int = 201,
    noise: InstrumentNoise = NA_NOISE_DEFAULT,
    table_accuracy: InstrumentNoise = TABLE_ACCURACY_DEFAULT,
    reference_ohm: float = 50.0,
    connections=PLAN_CONNECTIONS,
    seed: int = 0,
) -> Plan:
    """Return the expected result of measuring a part through each connection.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The kind of part.
    params : mapping
        Its expected values, SI units: ``L, R_s, C_p[, R_p]`` or
        ``C, ESR, ESL[, R_leak]``.
    band : tuple of float
        Lowest and highest frequency of the sweep, Hz.
    points : int
        Log-spaced points.
    noise : InstrumentNoise
        The network analyser's noise on S.
    table_accuracy : InstrumentNoise
        The impedance analyser's stated accuracy on Z (relative, ohm floor).
    reference_ohm : float
        The analyser's reference impedance, ohm.
    connections : sequence of str
        Which of `PLAN_CONNECTIONS` to plan.
    seed : int
        Seed of the simulated noisy measurement the identification is run on.

    Returns
    -------
    Plan
        Frozen; ``to_dict()`` gives the ``zfit.plan/1`` JSON object.

    References
    ----------
    .. [1] S. M. Kay, *Fundamentals of Statistical Signal Processing:
       Estimation Theory*, Prentice Hall, 1993, ch. 3 (from memory).
    """
    from ..fit._circuits import circuit_for
    from ._pipeline import identify
    from ..fit._fisher import fisher_log_covariance, fisher_uncertainties, is_resolved, limits_for

    params = _check_params(model, dict(params))
    lo, hi = (float(band[0]), float(band[1]))
    if not (0 < lo < hi and math.isfinite(hi)):
        from .._units import format_eng

        raise ZfitInputError(f"band must be two frequencies low:high with 0 < low < high, got "
                             f"{format_eng(lo, 'Hz')}:{format_eng(hi, 'Hz')}")
    if int(points) < 10:
        raise ZfitInputError(f"a plan needs at least 10 points, got {points}")
    if int(points) > MAX_POINTS:
        raise ZfitInputError(f"a plan takes at most {MAX_POINTS} points (more than any analyser sweeps), got {points}")
    if not (math.isfinite(float(reference_ohm)) and float(reference_ohm) > 0):
        raise ZfitInputError(f"the reference impedance must be a positive number of ohm, got {float(reference_ohm):g}")
    from ..io._touchstone import REFERENCE_RANGE_OHM

    # The range the readers accept in a file's option line, for the same reason: S <-> Z keeps Z's digits.
    bounded(reference_ohm, "the reference impedance", *REFERENCE_RANGE_OHM, unit="ohm")
    for c in connections:
        if c not in PLAN_CONNECTIONS:
            raise ZfitInputError(f"unknown connection {c!r}; use one of {', '.join(PLAN_CONNECTIONS)}")
    circuit = circuit_for(model, params)
    f = np.geomspace(lo, hi, int(points))
    rng = np.random.default_rng(seed)
    plans = []
    for conn in [c for c in PLAN_CONNECTIONS if c in connections]:
        nz = noise if conn in NA_CONNECTIONS else table_accuracy
        clean = simulated_sweep(model, params, conn, f, nz, reference_ohm)
        measured = simulated_sweep(model, params, conn, f, nz, reference_ohm, rng=rng)
        keep = np.ones(f.size, bool)
        topology, warns, error, reported = None, [], None, {}
        import warnings as _w

        try:
            with _w.catch_warnings():
                # The identification's warnings are kept in its result; numpy's
                # arithmetic warnings on a simulated extreme are not the plan's news.
                _w.simplefilter("ignore")
                ident = identify(measured, model=model)
            warns += list(getattr(ident, "warnings", ()))
            topology = ident.topology
            reported = {k: e for k, e in ident.parameters.items()}
            fit = ident.fit
            flo, fhi = getattr(fit, "fitted_band_hz", None) or (fit.f_min_hz, fit.f_max_hz)
            keep = (f >= flo * (1 - 1e-12)) & (f <= fhi * (1 + 1e-12))
            if keep.sum() < 10:
                keep[:] = True
        except (FitError, ZfitInputError) as exc:
            error = str(exc)
        std = fisher_uncertainties(model, params, f[keep], clean.sigma_ohm[keep])
        limits = limits_for(model, params, f[keep], clean.sigma_ohm[keep], conn, reference_ohm, nz)
        entries = {}
        for k in circuit.keys:
            v = params[k]
            rel = std[k] / v
            e = reported.get(k)
            entries[k] = PlannedParameter(
                key=k, value=v, unit=UNITS[k], std=std[k], relative_std=rel,
                resolved=bool(rel <= 1 / 3 and is_resolved(k, v, limits.get(k))),
                resolution_limit=limits.get(k),
                std_reported=None if e is None or e.std is None else float(e.std),
                estimate=None if e is None else float(e.value),
            )
        plans.append(ConnectionPlan(
            connection=conn, noise=nz, parameters=MappingProxyType(entries),
            fit_band_hz=(float(f[keep][0]), float(f[keep][-1])), topology=topology,
            warnings=tuple(dict.fromkeys(warns)), error=error,
            srf_std_hz=_srf_std(circuit, params, *fisher_log_covariance(model, params, f[keep], clean.sigma_ohm[keep])),
            determined_ohm=MappingProxyType(_determined_where(circuit, params, f[keep], clean.sigma_ohm[keep])),
        ))
    ranked = sorted(plans, key=lambda c: (c.error is not None, -c.n_resolved, c.score))
    best = ranked[0]
    srf = circuit.srf_hz(circuit.vector(params))
    return Plan(
        model=model, params=MappingProxyType(dict(params)), topology=circuit.topology,
        srf_hz=None if srf is None else float(srf), band_hz=(lo, hi), points=int(points),
        reference_ohm=float(reference_ohm), connections=tuple(plans),
        ranking=tuple(c.connection for c in ranked), recommended=best.connection,
        reason=_reason(ranked, float(reference_ohm)),
        notes=(
            f"network analyser noise {noise.describe('S')}; analyser table stated accuracy {table_accuracy.describe('Z')}",
            "expected uncertainty: Cramer-Rao bound (inverse Fisher information) at the planned values over the band "
            "the identification fitted; the circuit is taken as exact and calibration errors are not included",
        ),
    )


def _srf_std(circuit, params, keys, log_cov):
    """First-order uncertainty of the circuit's SRF from the log-parameter covariance."""
    p = circuit.vector(params)
    f0 = circuit.srf_hz(p)
    if f0 is None or not np.all(np.isfinite(log_cov)):
        return None if f0 is None else math.inf
    h = 1e-6
    g = np.empty(p.size)
    for i in range(p.size):
        up, dn = p.copy(), p.copy()
        up[i] *= math.exp(h)
        dn[i] *= math.exp(-h)
        a, b = circuit.srf_hz(up), circuit.srf_hz(dn)
        if a is None or b is None:
            return None
        g[i] = (a - b) / (2 * h)
    return float(math.sqrt(max(g @ log_cov @ g, 0.0)))


def _determined_where(circuit, params, f, sigma_ohm) -> dict:
    """``{key: (low, high)}``: |Z| where each parameter's Fisher information lies (central 80 %).

    The information of ``ln theta_k`` at point i is ``2 |dZ_i/d ln theta_k|^2 / sigma_i^2``
    (the diagonal of the Fisher matrix, Kay 1993, sec. 15.7); the points
    between its 10th and 90th cumulative percent, taken in order of |Z|,
    are where the sweep determines the parameter.
    """
    p = circuit.vector(params)
    z = np.abs(circuit.impedance(p, f))
    info = 2.0 * np.abs(circuit.log_jacobian(p, f)) ** 2 / np.asarray(sigma_ohm, float)[:, None] ** 2
    order = np.argsort(z)
    out = {}
    for i, k in enumerate(circuit.keys):
        w = info[order, i]
        total = float(np.sum(w))
        if not (math.isfinite(total) and total > 0):
            continue
        c = np.cumsum(w) / total
        out[k] = (float(z[order][np.searchsorted(c, 0.1)]), float(z[order][min(np.searchsorted(c, 0.9), z.size - 1)]))
    return out


def impedance_range(z_ohm: float, reference_ohm: float) -> str:
    """Return which connection's range an impedance lies in, as common practice assigns them.

    Each connection resolves impedances comparable to its own scale: shunt-thru
    (S21 = 2Z/(2Z + Z0)) those well below Z0, series-thru (S21 = 2Z0/(2Z0 + Z))
    those well above, reflection those near Z0 (common practice; Pozar,
    *Microwave Engineering*, 4th ed., 2012, sec. 4.3-4.4 for the formulas).
    A decade from Z0 is taken as "well" away.

    Parameters
    ----------
    z_ohm : float
        The impedance's magnitude, ohm.
    reference_ohm : float
        The analyser's reference impedance Z0, ohm.
    """
    if z_ohm < reference_ohm / 10:
        return "shunt-thru"
    if z_ohm > 10 * reference_ohm:
        return "series-thru"
    return "reflection"


_RANGE_WORDS = {"shunt-thru": "a low impedance", "series-thru": "a high impedance", "reflection": "near Z0"}


def _deciding(best, runner_up):
    """The parameter on which `best` beats `runner_up` by the largest factor (None when it does not)."""
    def rel(c, k):
        r = c.parameters[k].relative_std
        return min(r, 1.0) if math.isfinite(r) else 1.0

    gains = {k: rel(runner_up, k) / max(rel(best, k), 1e-12) for k in best.parameters if k in runner_up.parameters}
    if not gains:
        return None
    k = max(gains, key=gains.get)
    return k if gains[k] > 1 else None


def _rel_text(p: PlannedParameter) -> str:
    if not math.isfinite(p.relative_std):
        return f"{p.key} not determined"
    return f"{p.key} to ±{_percent(p.relative_std)}"


def _percent(x: float) -> str:
    return f"{100 * x:.2g} %" if x < 1 else f"{100 * x:.0f} %"


def _reason(ranked, reference_ohm: float = 50.0) -> str:
    best = ranked[0]
    n = len(best.parameters)
    head = f"{best.label} resolves {best.n_resolved} of {n} parameters, the least certain {_rel_text(best.worst)}"
    # Which parameter decided, and where in impedance the sweep determines it: the
    # connection's range (impedance_range) is the common-practice reason for the choice.
    rival = next((c for c in ranked[1:] if c.error is None), None)
    key = _deciding(best, rival) if rival is not None and best.error is None else None
    if key is not None and key in best.determined_ohm:
        lo, hi = best.determined_ohm[key]
        span = (f"|Z| is {format_eng(lo, 'ohm')} to {format_eng(hi, 'ohm')}" if hi > 1.01 * lo
                else f"|Z| is about {format_eng(math.sqrt(lo * hi), 'ohm')}")
        head += (f"; it wins on {key} ({_rel_text(best.parameters[key]).split(' to ')[1]} against "
                 f"{_rel_text(rival.parameters[key]).split(' to ')[-1]} in {rival.label}), determined where {span}")
        if best.connection in NA_CONNECTIONS:
            # The network analyser's connections each have their range; the table has none.
            where = impedance_range(math.sqrt(lo * hi), reference_ohm)
            head += f": {_RANGE_WORDS[where]}, {where}'s range"
    others = []
    for c in ranked[1:]:
        if c.error is not None:
            others.append(f"{c.label} cannot be identified ({c.error.split(';')[0]})")
            continue
        unresolved = [p for p in c.parameters.values() if not p.resolved]
        shown = unresolved[0] if unresolved else c.worst
        others.append(f"{c.label} resolves {c.n_resolved} ({_rel_text(shown)})")
    return head + ("; " + "; ".join(others) if others else "")


def format_plan(plan: Plan) -> str:
    """Return the plan as the text table the command line prints.

    Parameters
    ----------
    plan : Plan
        The plan.
    """
    from ..fit._fisher import unresolved_text

    vals = ", ".join(f"{k} = {format_eng(v, UNITS[k])}" for k, v in plan.params.items())
    srf = f" (SRF {format_eng(plan.srf_hz, 'Hz')})" if plan.srf_hz else ""
    lines = [f"plan: {plan.model}, {plan.topology}: {vals}{srf}",
             f"band {format_eng(plan.band_hz[0], 'Hz')} to {format_eng(plan.band_hz[1], 'Hz')}, {plan.points} log-spaced points, "
             f"reference {format_eng(plan.reference_ohm, 'ohm')}"]
    for c in plan.connections:
        on = "S" if c.connection in NA_CONNECTIONS else "Z"
        floor = f"{c.noise.floor:g}" if on == "S" else format_eng(c.noise.floor, "ohm")
        lines.append(f"noise, {c.label}: sigma({on}) = {c.noise.rel:g} |{on}| + {floor}")
    lines.append("")
    lines.append("expected standard uncertainty (relative) per connection")
    cells = {}
    for k in plan.params:
        for c in plan.connections:
            p = c.parameters[k]
            cell = f"±{format_eng(p.std, p.unit)} ({_percent(p.relative_std)})" if math.isfinite(p.std) else "not determined"
            if not p.resolved and p.resolution_limit is not None:
                cell = unresolved_text(k, p.resolution_limit, p.unit)
            elif not p.resolved:
                cell = "not resolved"
            cells[k, c.connection] = cell
    rows = list(plan.params)
    if plan.srf_hz:
        rows.append("SRF")
        for c in plan.connections:
            ok = c.srf_std_hz is not None and math.isfinite(c.srf_std_hz)
            cells["SRF", c.connection] = (
                f"±{format_eng(c.srf_std_hz, 'Hz')} ({_percent(c.srf_std_hz / plan.srf_hz)})" if ok else "not determined"
            )
    widths = {c.connection: 2 + max([len(c.label)] + [len(cells[k, c.connection]) for k in rows])
              for c in plan.connections}
    lines.append(("parameter".ljust(10) + "".join(c.label.ljust(widths[c.connection]) for c in plan.connections)).rstrip())
    for k in plan.params:
        row = k.ljust(10) + "".join(cells[k, c.connection].ljust(widths[c.connection]) for c in plan.connections)
        lines.append(row.rstrip())
    if plan.srf_hz:
        row = "SRF".ljust(10) + "".join(cells["SRF", c.connection].ljust(widths[c.connection]) for c in plan.connections)
        lines.append(row.rstrip())
    for c in plan.connections:
        if c.error:
            lines.append(f"{c.label}: identification failed: {c.error}")
    lines.append("")
    for c in plan.connections:
        for w in c.warnings[:3]:
            lines.append(f"{c.label} (one simulated measurement): {w}")
    lines.append(f"recommended: {label(plan.recommended)}")
    lines.append(f"why: {plan.reason}")
    return "\n".join(lines)
