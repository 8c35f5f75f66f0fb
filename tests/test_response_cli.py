"""The ``zfit response`` command: tables, the CSV of ``zfit step --response``, dividers, outputs, errors.

Reference networks: an R-C low pass (H = 1/(1 + s R C), tau = R C; its
square-wave response by the exact recursion of a first-order system driven
by a piecewise-constant input, y[n+1] = a y[n] + (1 - a) x[n] with
a = exp(-dt/tau), common practice), and an L-R divider simulated by ngspice's
AC analysis (an independent simulator).  Noise sizes are stated where used.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.signal import freqs
from typer.testing import CliRunner

from zfit.cli._app import app

SQRT3 = math.sqrt(3.0)


def run(*args):
    return CliRunner().invoke(app, ["response", *map(str, args)])


def validate(d):
    # The response schema with its "impedance" resolved to the identify schema (jsonschema, a reference library).
    jsonschema = pytest.importorskip("jsonschema")
    referencing = pytest.importorskip("referencing")
    from importlib.resources import files

    schema = json.loads(files("zfit").joinpath("schemas/response.schema.json").read_text())
    ident = json.loads(files("zfit").joinpath("schemas/identify.schema.json").read_text())
    registry = referencing.Registry().with_resource(ident["$id"], referencing.Resource.from_contents(ident))
    jsonschema.Draft202012Validator(schema, registry=registry).validate(d)


def table_file(path, f, h, rng, noise_db=0.05, noise_deg=0.3):
    """Write f, gain (dB), phase (deg) with Gaussian noise of the stated sizes, as a bench table."""
    g = 20 * np.log10(np.abs(h)) + rng.normal(0, noise_db, f.size)
    ph = np.degrees(np.angle(h)) + rng.normal(0, noise_deg, f.size)
    lines = ["Frequency (Hz),Gain (dB),Phase (deg)"] + [f"{a:.6g},{b:.4f},{c:.3f}" for a, b, c in zip(f, g, ph)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_rc_table_json_plot_and_step_response(tmp_path, rng):
    # R = 10 kohm, C = 1 nF: tau = 10 us, f_3dB = 15.92 kHz (definitions).
    tau = 10e3 * 1e-9
    f = np.geomspace(1e3, 300e3, 14)
    _, h = freqs([1.0], [tau, 1.0], 2 * np.pi * f)
    t = table_file(tmp_path / "rc.csv", f, h, rng)
    out, png, st = tmp_path / "rc.json", tmp_path / "rc.svg", tmp_path / "step.csv"
    res = run(t, "--gain-accuracy", SQRT3 * 0.05, "--phase-accuracy", SQRT3 * 0.3, "--json", out, "--plot", png,
              "--step-response", st)
    assert res.exit_code == 0, res.output
    assert "-3 dB:" in res.output and "tau = 1/omega" in res.output
    d = json.loads(out.read_text())
    validate(d)
    assert d["schema"] == "zfit.response/1"
    assert d["time_constants_s"][0]["value"] == pytest.approx(tau, rel=0.01)
    assert d["f_3db_hz"]["value_hz"] == pytest.approx(1 / (2 * math.pi * tau), rel=0.01)
    svg = png.read_text()
    for gid in ("gain-db", "phase", "model-gain-db", "model-phase", "cutoff", "step", "step-band"):
        assert f'id="{gid}' in svg, gid
    rows = np.loadtxt(st, delimiter=",", comments="#", skiprows=3)
    # The predicted step of a first-order low pass: 1 - exp(-t/tau) (definition), within 1 % of the final value.
    assert rows[:, 1] == pytest.approx(1 - np.exp(-rows[:, 0] / tau), abs=0.01)
    # 10-90 % rise time of a first-order step: tau ln 9 (common practice).
    assert d["step_response"]["rise_10_90_s"]["value"] == pytest.approx(tau * math.log(9), rel=0.01)
    # Nothing is overwritten without --force.
    again = run(t, "--json", out)
    assert again.exit_code == 2 and "exists already" in again.output


def _square_wave_capture(path, tau, rng, noise_v=2e-3):
    """A two-channel capture of a 0..1 V square wave through an R-C low pass, with white noise of noise_v on each."""
    dt, period, periods = 0.2e-6, 400e-6, 12
    n_per = int(round(period / dt))
    x = np.tile(np.r_[np.ones(n_per // 2), np.zeros(n_per // 2)], periods + 3)
    a = math.exp(-dt / tau)
    y = np.empty_like(x)
    acc = 0.0
    for k, xv in enumerate(x):
        y[k] = acc
        acc = a * acc + (1 - a) * xv
    # The first three periods settle the recursion into its periodic state; the scope records the rest.
    x, y = x[3 * n_per:], y[3 * n_per:]
    t = dt * np.arange(x.size)
    x = x + rng.normal(0, noise_v, x.size)
    y = y + rng.normal(0, noise_v, y.size)
    lines = ["Time,CH1,CH2"] + [f"{a_:.9g},{b:.6f},{c:.6f}" for a_, b, c in zip(t, x, y)]
    path.write_text("\n".join(lines) + "\n")
    return path


def test_capture_and_table_of_one_network_agree(tmp_path, rng):
    # R = 2 kohm, C = 10 nF: tau = 20 us.  The capture goes through `zfit step --response`, whose CSV
    # `zfit response` reads as it is; the table is 12 swept-sine readings (0.05 dB, 0.3 deg noise).
    tau = 2e3 * 10e-9
    cap = _square_wave_capture(tmp_path / "cap.csv", tau, rng)
    resp = tmp_path / "h.csv"
    step = CliRunner().invoke(app, ["step", str(cap), "--input", "CH1", "--output", "CH2", "--response", str(resp),
                                    "--json", str(tmp_path / "step.json")])
    assert step.exit_code == 0, step.output
    res_c = run(resp, "--json", tmp_path / "c.json")
    assert res_c.exit_code == 0, res_c.output
    f = np.geomspace(500, 200e3, 12)
    _, h = freqs([1.0], [tau, 1.0], 2 * np.pi * f)
    tab = table_file(tmp_path / "t.csv", f, h, rng)
    res_t = run(tab, "--gain-accuracy", SQRT3 * 0.05, "--phase-accuracy", SQRT3 * 0.3, "--json", tmp_path / "t.json")
    assert res_t.exit_code == 0, res_t.output
    c = json.loads((tmp_path / "c.json").read_text())
    t = json.loads((tmp_path / "t.json").read_text())
    validate(c)
    # The same response block in both (the keys of zfit.step/1's).
    step_block = json.loads((tmp_path / "step.json").read_text())["response"]
    assert set(c["response"]) == set(t["response"]) == set(step_block)
    assert c["response"]["dc_gain"] == pytest.approx(step_block["dc_gain"], rel=0.01)
    assert c["response"]["method"].startswith("H1 = G_xy/G_xx")
    tc, tt = c["time_constants_s"][0], t["time_constants_s"][0]
    assert tc["value"] == pytest.approx(tau, rel=0.01) and tt["value"] == pytest.approx(tau, rel=0.01)
    # They agree within their uncertainties (3 combined standard uncertainties).
    assert abs(tc["value"] - tt["value"]) < 3 * math.hypot(tc["std"], tt["std"])
    fc, ft = c["f_3db_hz"], t["f_3db_hz"]
    assert abs(fc["value_hz"] - ft["value_hz"]) < 3 * math.hypot(fc["std_hz"], ft["std_hz"])


@pytest.mark.parametrize("across", ["resistor", "part"])
def test_ngspice_divider_gives_the_inductor(tmp_path, across):
    # A 4.7 mH inductor with 15 ohm of winding in series with 1 kohm, driven by 1 V AC; ngspice's AC analysis
    # at 10 points per decade, 1 kHz to 300 kHz, read to 4 digits as a bench table.  L within 2 %.
    from ngspice import _read_wrdata, _run

    deck = ("* zfit test: L-R divider\nV1 in 0 AC 1\nL1 in a 4.7m\nRw a mid 15\nR1 mid 0 1k\n"
            ".control\nset wr_singlescale\nset wr_vecnames\nset filetype=ascii\noption numdgt=12\n"
            "ac dec 10 1k 300k\nwrdata ac.txt v(mid)\nquit\n.endc\n.end\n")
    _run(deck, tmp_path)
    data = _read_wrdata(tmp_path / "ac.txt")
    f = data[:, 0]
    v_mid = data[:, 1] + 1j * data[:, 2]
    # Across the resistor: V_out = V(mid).  Across the part: V_out = V(in) - V(mid) = 1 - V(mid).
    h = v_mid if across == "resistor" else 1.0 - v_mid
    lines = ["f (Hz),gain (dB),phase (deg)"] + [f"{a:.6g},{20 * math.log10(abs(b)):.4g},{math.degrees(np.angle(b)):.4g}"
                                                for a, b in zip(f, h)]
    t = tmp_path / "div.csv"
    t.write_text("\n".join(lines) + "\n")
    out = tmp_path / "div.json"
    res = run(t, "--divider", "series:1k", "--across", across, "--gain-accuracy", "0.01", "--phase-accuracy", "0.05",
              "--model", "inductor", "--json", out)
    assert res.exit_code == 0, res.output
    d = json.loads(out.read_text())
    validate(d)
    assert d["divider"] == {"resistor_ohm": 1000.0, "output_across": across}
    assert d["impedance"]["parameters"]["L"]["value"] == pytest.approx(4.7e-3, rel=0.02)


def test_shunt_is_the_divider_across_the_resistor(tmp_path, rng):
    # H = R/(R + R_w + s L) with R = 1 kohm, R_w = 20 ohm, L = 10 mH (the series L-R divider).
    f = np.geomspace(300, 300e3, 16)
    _, h = freqs([1e3], [10e-3, 1020.0], 2 * np.pi * f)
    t = table_file(tmp_path / "lr.csv", f, h, rng)
    a = run(t, "--shunt", "1k", "--json", tmp_path / "a.json")
    b = run(t, "--divider", "series:1k", "--across", "resistor", "--json", tmp_path / "b.json")
    assert a.exit_code == 0 and b.exit_code == 0, a.output + b.output
    la = json.loads((tmp_path / "a.json").read_text())["impedance"]["parameters"]["L"]
    lb = json.loads((tmp_path / "b.json").read_text())["impedance"]["parameters"]["L"]
    assert la == lb
    assert la["value"] == pytest.approx(10e-3, rel=0.02)


def test_json_to_standard_output(tmp_path, rng):
    f = np.geomspace(100, 100e3, 8)
    _, h = freqs([1.0], [1e-4, 1.0], 2 * np.pi * f)
    t = table_file(tmp_path / "rc.csv", f, h, rng)
    res = CliRunner().invoke(app, ["response", str(t), "--json", "-"])
    assert res.exit_code == 0
    d = json.loads(res.stdout)
    # tau = 0.1 ms within 2 % with the default accuracy (0.2 dB, 1 deg bounds; noise 0.05 dB, 0.3 deg).
    assert d["time_constants_s"][0]["value"] == pytest.approx(1e-4, rel=0.02)


@pytest.mark.parametrize("args, message", [
    (["--divider", "1k", "--across", "resistor"], "write series:R"),
    (["--divider", "series:1k"], "--across resistor"),
    (["--divider", "series:-5", "--across", "part"], "--divider"),
    (["--across", "part"], "--across needs --divider"),
    (["--shunt", "1k", "--divider", "series:1k", "--across", "part"], "either --divider or --shunt"),
    (["--netlist", "x.cir"], "--netlist needs"),
    (["--max-order", "9"], "1 to 6"),
    (["--gain-accuracy", "-1"], "--gain-accuracy"),
    (["--step-response", "x.png"], "CSV"),
])
def test_bad_options_are_one_line_exit_2(tmp_path, rng, args, message):
    f = np.geomspace(100, 100e3, 8)
    _, h = freqs([1.0], [1e-4, 1.0], 2 * np.pi * f)
    t = table_file(tmp_path / "rc.csv", f, h, rng)
    res = run(t, *args)
    assert res.exit_code == 2
    lines = [ln for ln in res.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("zfit: error:") and message in lines[0], res.output


def test_phase_out_of_range_is_one_line_exit_2(tmp_path):
    t = tmp_path / "bad.csv"
    t.write_text("f (Hz),gain (dB),phase (deg)\n100,0,-5\n1000,-3,-45\n10000,-20,-900\n")
    res = run(t)
    assert res.exit_code == 2
    assert res.output.strip() == (f"zfit: error: {t}:4: phase -900 deg is beyond +-720 deg (two turns): out of range "
                                  "(radians read as degrees?)")
    assert Path(t).exists()


def test_capacitor_behind_a_divider_across_the_part(tmp_path, rng):
    # R = 1 kohm in series with C = 100 nF (ESR 0.5 ohm), V_out across the capacitor:
    # H = (ESR C s + 1)/((R + ESR) C s + 1) (common practice); 20 readings, noise 0.02 dB and 0.1 deg.
    R, C, esr = 1e3, 100e-9, 0.5
    f = np.geomspace(100, 100e3, 20)
    _, h = freqs([esr * C, 1.0], [(R + esr) * C, 1.0], 2 * np.pi * f)
    t = table_file(tmp_path / "c.csv", f, h, rng, noise_db=0.02, noise_deg=0.1)
    cir = tmp_path / "c.cir"
    res = run(t, "--divider", "series:1k", "--across", "part", "--gain-accuracy", SQRT3 * 0.02,
              "--phase-accuracy", SQRT3 * 0.1, "--json", tmp_path / "c.json", "--netlist", cir)
    assert res.exit_code == 0, res.output
    d = json.loads((tmp_path / "c.json").read_text())
    p = d["impedance"]["parameters"]
    assert d["impedance"]["model"] == "capacitor"
    assert p["C"]["value"] == pytest.approx(C, rel=0.01)
    assert p["ESR"]["value"] == pytest.approx(esr, abs=3 * p["ESR"]["std"])
    # The transfer function's pole is 1/((R + ESR) C) (the definition of the divider's time constant).
    assert d["time_constants_s"][0]["value"] == pytest.approx((R + esr) * C, rel=0.01)
    assert cir.read_text().startswith("* Equivalent circuit of a capacitor")


def test_demo_capture_through_step_response_gives_the_coil(tmp_path):
    # The demo coil (demo_sweeps/make_demo_capture.py: L = 4.7 mH, R_w = 12 ohm, C_p = 38 pF, invented) with a
    # 1 kohm sense resistor: `zfit step --response` writes H, `zfit response --shunt 1k` reads it back; the
    # coil agrees with `zfit step --shunt 1k` on the same capture, and with the invented values.
    cap = Path(__file__).resolve().parent.parent / "demo_sweeps" / "coil_4m7_square_1k.csv"
    h, js = tmp_path / "h.csv", tmp_path / "s.json"
    step = CliRunner().invoke(app, ["step", str(cap), "-i", "CH1", "-o", "CH2", "--shunt", "1k", "--response", str(h),
                                    "--json", str(js)])
    assert step.exit_code == 0, step.output
    res = run(h, "--shunt", "1k", "--json", tmp_path / "r.json")
    assert res.exit_code == 0, res.output
    r = json.loads((tmp_path / "r.json").read_text())
    s = json.loads(js.read_text())
    validate(r)
    for k, ref, tol in (("L", 4.7e-3, 0.03), ("C_p", 38e-12, 0.08)):
        a, b = r["impedance"]["parameters"][k], s["impedance"]["parameters"][k]
        assert a["value"] == pytest.approx(ref, rel=tol)
        assert abs(a["value"] - b["value"]) < 3 * math.hypot(a["std"], b["std"])
    # tau of H = R/(R + R_w + sL): L/(R + R_w) = 4.64 us within 3 % (the step's own figure is checked likewise).
    assert r["time_constants_s"][0]["value"] == pytest.approx(4.7e-3 / 1012.0, rel=0.03)
    # The self-resonance is a notch of H: a complex zero pair at the SRF, 1/(2 pi sqrt(L C_p)) = 375 kHz, within 3 %.
    pair = [z for z in r["zeros"] if z["kind"] == "pair"]
    assert pair and pair[0]["corner_hz"]["value"] == pytest.approx(1 / (2 * math.pi * math.sqrt(4.7e-3 * 38e-12)), rel=0.03)
