"""``zfit batch`` on a lot of cores and a lot of beads: the material figures in the limits file.

The cores and beads are generated from the forms written out in tests/core_sweeps.py
and measured with the analyser noise written out there.
"""

import numpy as np
import pytest

from core_sweeps import bead_z, debye_winding, measured
from zfit._errors import ZfitInputError
from zfit.io._limits_file import parse_limits
from zfit.lot._run import run_batch

CORE_LIMITS = """
title = "Incoming ferrite rings, 25/15/10 mm, 5 turns"
[core]
turns = 5
od = 25
id = 15
height = 10
geometry_tol = "2%"

[limit.mu_i]
nominal = 2000
tolerance_percent = 20

[limit.f_mu_peak]
min = "700k"

[[limit.loss_factor]]
at = "100k"
max = "80u"
"""


def test_lot_of_cores_gets_verdicts(tmp_path):
    lot = tmp_path / "lot"
    lot.mkdir()
    f = np.geomspace(1e3, 3e7, 201)
    for i, mu_i in enumerate((1800.0, 2000.0, 2200.0, 2700.0)):
        (lot / f"ring{i}").mkdir()
        measured(lot / f"ring{i}", f, debye_winding(f, mu_i, 0.02 * mu_i, 1e6, 5, 0.02, 3e-12), "reflection", 40 + i)
    lim = parse_limits(CORE_LIMITS, "cores.toml")
    res = run_batch([lot], tmp_path / "out", limits=lim, jobs=1, progress=False)
    rows = {r.name.replace("\\", "/").split("/")[-2]: r for r in res.rows}
    # 2000 +-20 % with a guard band of 2 u, u(mu_i) = 3.4 % from the 2 % geometry tolerance (JCGM 106 8.3.2):
    # 1800 (1678..1922), 2000 and 2200 (2050..2350) pass; 2700 is outside the limits and fails.
    assert [rows[f"ring{i}"].verdict for i in range(4)] == ["pass", "pass", "pass", "fail"], [r.reasons for r in res.rows]
    assert rows["ring3"].failed == ("mu_i",)
    assert rows["ring1"].figures["mu_i"][0] == pytest.approx(2000.0, rel=0.03)
    # tan(delta)/mu_i of the Debye form at 100 kHz: D u/(mu_inf (1 + u^2) + D)/mu_i (algebra), 5 %.
    u, d = 0.1, 0.98 * 2000
    assert rows["ring1"].figures["loss_factor@100kHz"][0] == pytest.approx(d * u / (40 * (1 + u * u) + d) / 2000, rel=0.05)
    text = res.summary_path.read_text()
    assert "mu_i_std" in text.splitlines()[0] and "loss_factor@100kHz" in text.splitlines()[0]


def test_lot_of_beads_gets_verdicts(tmp_path):
    lot = tmp_path / "beads"
    lot.mkdir()
    f = np.geomspace(1e6, 3e9, 301)
    for i, scale in enumerate((1.0, 0.6)):
        measured(lot, f, bead_z(f, scale), "series-thru", 70 + i, name=f"b{i}")
    from zfit.lot._tasks import ReadOptions

    lim = parse_limits('[[limit.Z_mag]]\nat = "100M"\nmin = 300\n[limit.f_RX]\nmax = "200M"\n', "beads.toml")
    res = run_batch([lot], tmp_path / "out", limits=lim, jobs=1, progress=False, read=ReadOptions(connection="series-thru"))
    rows = {r.name.replace("\\", "/").split("/")[-1]: r for r in res.rows}
    # |Z| at 100 MHz of the circuit above is 351 ohm, and 220 ohm with the section resistances scaled by 0.6
    # (computed from the formula): against min 300 ohm, the first passes and the second fails.
    assert rows["b0.s2p"].verdict == "pass" and rows["b1.s2p"].verdict == "fail"
    assert "Z_mag@100MHz" in rows["b1.s2p"].failed
    assert "f_RX" in rows["b0.s2p"].figures


def test_core_figures_need_the_core_table():
    with pytest.raises(ZfitInputError, match=r"needs the cores' turns and geometry") as exc:
        parse_limits("[limit.mu_i]\nmin = 100\n", "c.toml")
    assert exc.value.line == 1


def test_bad_core_table_names_file_and_line():
    with pytest.raises(ZfitInputError, match=r"core: .*must be below") as exc:
        parse_limits("[core]\nturns = 3\nod = 10\nid = 12\nheight = 5\n[limit.mu_i]\nmin = 100\n", "c.toml")
    assert exc.value.path == "c.toml" and exc.value.line == 1
