"""A sweep set against DC bias: identify every sweep, then L (or C) against bias.

Each sweep is identified by the lot's own machinery (`zfit.lot._worker`,
run in parallel by `zfit.lot._executors`, read with the lot's
`ReadOptions`), which writes its ``zfit.identify/1`` JSON beside the set's
result; the set's figures (`zfit.identification._bias_curve`) are computed
here from the identified values.  The result is the ``zfit.bias/1`` JSON
contract (docs/bias.md).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

from .._atomic import check_writable
from .._errors import ZfitInputError
from .._parameters import BIAS_FIGURES
from ..identification._bias_curve import BiasCurve, FallPoint, bias_curve, fall_point
from ..io._limits_file import Limits
from ._bias_inputs import BiasPoint
from ._conformity import PartDecision, decide
from ._executors import local_jobs, run_parts
from ._inputs import output_names
from ._progress import Progress, Quiet
from ._tasks import PartTask, ReadOptions

__all__ = ["BiasRow", "BiasFigureValue", "BiasSet", "run_bias_set", "bias_set", "SCHEMA", "CURVE_FORM",
           "FAMILY_KEYS"]

SCHEMA = "zfit.bias/1"

#: The fitted form, as written in the JSON and the docs.
CURVE_FORM = "y0 / (1 + (x / x_s)^n)"

#: Per family: the bias unit, the value key, the series-loss key.
FAMILY_KEYS = {"inductor": ("A", "L", "R_s"), "capacitor": ("V", "C", "ESR")}


@dataclass(frozen=True)
class BiasRow:
    """One sweep of the set, identified.

    Attributes
    ----------
    name : str
        The file.
    bias : float
        Its DC bias (A or V).
    value, loss, srf : tuple
        ``(value, std)`` of L (or C), of R_s (or ESR), and ``(value, std, bound)`` of the SRF.
    srf_where : str
        Where the SRF lies.
    json : str
        Its ``zfit.identify/1`` file, relative to the output folder.
    warnings : tuple of str
    """

    name: str
    bias: float
    value: tuple
    loss: tuple
    srf: tuple
    srf_where: str
    json: str
    warnings: tuple = ()


@dataclass(frozen=True)
class BiasFigureValue:
    """A fall figure of the set (``I_sat_20``): interpolated, and from the fitted curve.

    Attributes
    ----------
    key : str
    point : FallPoint
        Interpolated between the measured points (the reported figure).
    curve_value, curve_std : float or None
        The fitted curve's fall point, a check of the interpolation.
    """

    key: str
    point: FallPoint
    curve_value: float | None
    curve_std: float | None

    @property
    def figure(self) -> tuple:
        """``(value, std, bound)`` as the decision rule reads it."""
        return (self.point.value, self.point.std, self.point.bound)


@dataclass(frozen=True)
class BiasSet:
    """L(I) or C(V) of a part from a set of sweeps.

    Attributes
    ----------
    family : {'inductor', 'capacitor'}
    unit : {'A', 'V'}
    rows : tuple of BiasRow
        Ascending in bias.
    reference : tuple
        ``(value, std)`` of the zero-bias value the falls are counted from.
    reference_source : {'zero-bias sweep', 'fitted curve'}
    curve : BiasCurve or None
        The fitted curve (None with fewer than 4 sweeps).
    figures : tuple of BiasFigureValue
    decision : PartDecision or None
        The verdict against the limits, when given.
    bias_rel_std : float
        Relative standard uncertainty of the bias readings used.
    """

    family: str
    unit: str
    rows: tuple
    reference: tuple
    reference_source: str
    curve: BiasCurve | None
    figures: tuple
    decision: PartDecision | None = None
    bias_rel_std: float = 0.0

    @property
    def value_key(self) -> str:
        """``L`` or ``C``."""
        return FAMILY_KEYS[self.family][1]

    @property
    def loss_key(self) -> str:
        """``R_s`` or ``ESR``."""
        return FAMILY_KEYS[self.family][2]

    def figure_map(self) -> dict:
        """Figure name -> ``(value, std[, bound])``: the bias figures and those of the zero-bias sweep."""
        out: dict = {}
        if self.rows and self.rows[0].bias == 0.0:
            r = self.rows[0]
            out.update({self.value_key: r.value, self.loss_key: r.loss, "SRF": r.srf})
        out.update({f.key: f.figure for f in self.figures})
        return out

    def to_dict(self) -> dict:
        """Return the ``zfit.bias/1`` JSON object (docs/bias.md)."""
        from .._version import __version__

        def pair(t):
            return {"value": t[0], "std": t[1]}

        curve = None
        if self.curve is not None:
            s = self.curve.std
            curve = {"form": CURVE_FORM, "y0": pair((self.curve.y0, s[0])), "x_s": pair((self.curve.x_s, s[1])),
                     "n": pair((self.curve.n, s[2])), "chi2": self.curve.chi2, "dof": self.curve.dof,
                     "covariance_log": [[float(v) for v in row] for row in self.curve.cov_log]}
        d = {
            "schema": SCHEMA,
            "zfit_version": __version__,
            "family": self.family,
            "bias_unit": self.unit,
            "value_key": self.value_key,
            "loss_key": self.loss_key,
            "bias_rel_std": self.bias_rel_std,
            "reference": {**pair(self.reference), "source": self.reference_source},
            "points": [{"file": r.name, "bias": r.bias, self.value_key: pair(r.value), self.loss_key: pair(r.loss),
                        "SRF": {"value_hz": r.srf[0], "std_hz": r.srf[1], "bound_hz": r.srf[2],
                                "where": r.srf_where},
                        "result": r.json, "warnings": list(r.warnings)} for r in self.rows],
            "curve": curve,
            "figures": {f.key: {"fall": self.fall_of(f.key), "value": f.point.value, "std": f.point.std,
                                "bound": f.point.bound, "method": f.point.method,
                                "curve_value": f.curve_value, "curve_std": f.curve_std} for f in self.figures},
            "verdict": None,
        }
        if self.decision is not None:
            d["verdict"] = {"verdict": self.decision.verdict,
                            "limits": [{"name": x.limit.name, "verdict": x.verdict, "value": x.value,
                                        "std": x.std, "reason": x.reason} for x in self.decision.decisions]}
        return d

    @staticmethod
    def fall_of(key: str) -> float:
        """The fall fraction of a figure key."""
        return BIAS_FIGURES[key].fall


def bias_set(family: str, unit: str, rows: Sequence[BiasRow], *, limits: Limits | None = None,
             bias_rel_std: float = 0.0) -> BiasSet:
    """Return the set's figures from its identified sweeps (pure: no file is read).

    Parameters
    ----------
    family : {'inductor', 'capacitor'}
    unit : {'A', 'V'}
    rows : sequence of BiasRow
        Ascending in bias, at least three.
    limits : Limits, optional
        Checked with the lot's decision rule (`zfit.lot._conformity.decide`).
    bias_rel_std : float
        Relative standard uncertainty of the bias readings.
    """
    import numpy as np

    x = np.array([r.bias for r in rows])
    y = np.array([r.value[0] for r in rows], dtype=float)
    s = np.array([r.value[1] if r.value[1] is not None else np.nan for r in rows], dtype=float)
    curve = bias_curve(x, y, s) if len(rows) >= 4 else None
    if x[0] == 0.0:
        ref, source, y0 = (float(y[0]), None if not math.isfinite(s[0]) else float(s[0])), "zero-bias sweep", None
    elif curve is not None:
        ref, source, y0 = (curve.y0, curve.std[0]), "fitted curve", curve.y0
    else:
        raise ZfitInputError("no zero-bias sweep and too few sweeps (need 4) to fit the zero-bias value")
    figs = []
    for key, fig in BIAS_FIGURES.items():
        if fig.family != family:
            continue
        pt = fall_point(x, y, s, fig.fall, y0=y0, y0_std=ref[1] if y0 is not None else None,
                        bias_rel_std=bias_rel_std)
        cv = curve.fall_bias(fig.fall) if curve is not None else (None, None)
        figs.append(BiasFigureValue(key, pt, *cv))
    out = BiasSet(family, unit, tuple(rows), ref, source, curve, tuple(figs), None, bias_rel_std)
    if limits is not None:
        out = BiasSet(family, unit, tuple(rows), ref, source, curve, tuple(figs), decide(limits, out.figure_map()),
                      bias_rel_std)
    return out


def _family(model: str) -> str | None:
    return model if model in FAMILY_KEYS else None


def run_bias_set(points: Sequence[BiasPoint], unit: str, out, *, model: str = "auto",
                 read: ReadOptions | None = None, jobs: int | None = None, cluster: str | None = None,
                 limits: Limits | None = None, bias_rel_std: float = 0.0, force: bool = False,
                 progress=None) -> BiasSet:
    """Identify every sweep of a bias set (in parallel) and return the set's figures.

    Parameters
    ----------
    points : sequence of BiasPoint
        The sweeps and their biases (`zfit.lot._bias_inputs.bias_points`).
    unit : {'A', 'V'}
        The bias unit: a current for an inductor, a voltage for a capacitor.
    out : str or os.PathLike
        Folder for each sweep's ``zfit.identify/1`` JSON.
    model : {'auto', 'inductor', 'capacitor'}
    read : ReadOptions, optional
    jobs : int, optional
        Local worker processes (default: all cores; 1 = in this process).
    cluster : str, optional
        A Dask scheduler's address, as for ``zfit batch``.
    limits : Limits, optional
    bias_rel_std : float
    force : bool
        Replace the sweeps' JSON files in `out` if they exist.
    progress : Progress or False, optional

    Raises
    ------
    ZfitInputError
        Naming the file: a sweep that cannot be identified, a sweep of
        another family than the others, a bias unit that does not fit the
        family (a current for a capacitor).
    OutputExistsError
        When a JSON file is in the way and `force` is false.
    """
    if model not in ("auto", "inductor", "capacitor"):
        raise ZfitInputError(f"--model {model!r}: use auto, inductor or capacitor")
    if model != "auto" and FAMILY_KEYS[model][0] != unit:
        raise ZfitInputError(f"the biases are in {unit} but --model is {model}: "
                             f"{'an inductor is biased with a current (A)' if model == 'inductor' else 'a capacitor is biased with a voltage (V)'}")
    out = Path(out)
    n_jobs = local_jobs(jobs)
    stems = output_names([(p.path, p.name) for p in points])
    tasks = [PartTask(i, str(p.path), p.name, str(out / (stem + ".json")), None, model, (), read or ReadOptions())
             for i, (p, stem) in enumerate(zip(points, stems))]
    for t in tasks:
        check_writable(t.json_path, force)
    out.mkdir(parents=True, exist_ok=True)
    outcomes = {}

    def on_done(outs):
        for o in outs:
            outcomes[o.index] = o
        progress.update(len(outs), sum(1 for o in outs if o.error))

    progress = Progress(len(tasks), label="zfit bias") if progress is None else (Quiet() if progress is False else progress)
    run_parts(tasks, cluster, n_jobs, on_done, progress)
    rows = []
    families: dict[str, str] = {}
    for t, p in zip(tasks, points):
        o = outcomes.get(t.index)
        if o is None or o.error is not None or o.result is None:
            raise ZfitInputError(o.error if o is not None and o.error else f"{p.name}: no result")
        fam = _family(o.result.model)
        if fam is None:
            raise ZfitInputError(f"identified as {o.result.model}, not as an inductor or a capacitor: "
                                 f"give --model inductor or capacitor", p.name)
        families.setdefault(fam, p.name)
        if len(families) > 1:
            other = next(f for f in families if f != fam)
            an = {"inductor": "an inductor", "capacitor": "a capacitor"}
            raise ZfitInputError(f"identified as {an[fam]}, but {families[other]} as {an[other]}: "
                                 f"a bias set is one part (give --model to say which)", p.name)
        _, vkey, lkey = FAMILY_KEYS[fam]
        figs = o.result.figures
        rows.append(BiasRow(p.name, p.bias, tuple(figs.get(vkey, (None, None))[:2]),
                            tuple(figs.get(lkey, (None, None))[:2]), tuple(figs.get("SRF", (None, None, None))),
                            o.result.srf_where, Path(os.path.relpath(t.json_path, out)).as_posix(),
                            tuple(dict.fromkeys((*o.result.warnings, *o.warnings)))))
    fam = next(iter(families))
    if FAMILY_KEYS[fam][0] != unit:
        what = "a current (A)" if fam == "inductor" else "a voltage (V)"
        raise ZfitInputError(f"the sweeps are of {'an inductor' if fam == 'inductor' else 'a capacitor'}, "
                             f"biased with {what}, but the biases are in {unit}", points[0].name)
    for r in rows:
        if r.value[0] is None or not r.value[0] > 0:
            raise ZfitInputError(f"no {FAMILY_KEYS[fam][1]} identified", r.name)
    return bias_set(fam, unit, rows, limits=limits, bias_rel_std=bias_rel_std)
