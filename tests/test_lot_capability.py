"""A capability figure the measurement, not the process, sets is said to be so
(AIAG MSA 4th ed.; ISO 22514-7): in lot.csv, lot.json and the printed summary."""

import csv
import io
import json

import numpy as np
import pytest

def test_capability_limited_by_the_measurement_is_said():
    from zfit.io._limits_file import parse_limits
    from zfit.lot._lot_files import lot_csv_text, lot_json_text, lot_text
    from zfit.lot._part_summary import PartSummary
    from zfit.lot._rows import part_row
    from zfit.lot._statistics import lot_summary
    from zfit.lot._tasks import PartOutcome

    lim = parse_limits('model = "inductor"\n[limit.L]\nnominal = "10u"\ntolerance_percent = 5\n'
                       '[limit.SRF]\nmin = "20M"\n')
    # SRF: spread 1.58 kHz, far below each part's 20 kHz uncertainty; L: spread 100 nH, u 1 nH.
    d = np.array([-2.0, -1.0, 0.0, 1.0, 2.0])
    rows = [part_row(PartOutcome(i, f"p{i}", PartSummary("inductor", "series R_s-L", {
        "L": (10e-6 + 1e-7 * d[i], 1e-9), "SRF": (30e6 + 1e3 * d[i], 2e4, None)}, "in-band")), lim)
        for i in range(5)]
    lot = lot_summary(rows, lim)
    q = {s.name: s for s in lot.quantities}
    s_srf = 1e3 * np.sqrt(np.sum(d ** 2) / 4)  # sample std, n - 1 (common practice)
    # Cpk = (mean - LSL) / (3 s) (Montgomery 2013, 8.3): 2108, a figure of the measurement.
    assert q["SRF"].cpk == pytest.approx((30e6 - 20e6) / (3 * s_srf), rel=1e-9)
    # The rule: s <= u_rms (AIAG MSA 4th ed.; ISO 22514-7): SRF yes (1.58 kHz <= 20 kHz), L no (158 nH > 1 nH).
    assert q["SRF"].measurement_limited is True and q["L"].measurement_limited is False
    table = list(csv.DictReader(io.StringIO(lot_csv_text(lot))))
    assert [r["limited_by_measurement"] for r in table] == ["false", "true"]
    doc = json.loads(lot_json_text(lot))
    assert [x["limited_by_measurement"] for x in doc["quantities"]] == [False, True]
    assert "Cpk" in doc["quantities"][1] and doc["quantities"][1]["Cpk"] == pytest.approx(2108.185, rel=1e-6)
    said = [ln for ln in lot_text(lot).splitlines() if "limited by the measurement" in ln]
    assert said == ["Cpk of SRF limited by the measurement uncertainty, not the process "
                    "(lot std 1.581 kHz <= u_rms 20 kHz)"]
