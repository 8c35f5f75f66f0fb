"""Write the reader fixture files in tests/data/ (invented content only).

Every good fixture holds the same invented part, `model_z` (series R-L with
parallel C), at the 12 frequencies of `FREQS`, written with 12 significant
digits in the layout of the case it stands for.  The tests recompute the
impedance from the model and compare.  The bad fixtures each break one rule
at a known line (``EXPECTED_ERRORS`` in the tests).

Run:  python tests/data/make_fixtures.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
TS = HERE / "touchstone"
TAB = HERE / "tables"

#: 12 frequencies, 1 MHz .. 100 MHz, round numbers so that every unit prints exactly.
FREQS = np.array([1, 1.5, 2.2, 3.3, 4.7, 6.8, 10, 15, 22, 33, 47, 68]) * 1e6


def model_z(f):
    """Series 0.5 ohm - 1 uH, with 10 pF across: SRF near 50 MHz."""
    s = 2j * np.pi * np.asarray(f, dtype=float)
    return 1 / (1 / (0.5 + s * 1e-6) + s * 10e-12)


def s_reflection(z, z0):
    return (z - z0) / (z + z0)


def s_series(z, z0):
    # A series impedance between two z0 ports: S11 = Z/(Z + 2 z0), S21 = 2 z0/(Z + 2 z0).
    return z / (z + 2 * z0), 2 * z0 / (z + 2 * z0)


def s_shunt(z, z0):
    # A shunt impedance across the line: S11 = -z0/(2Z + z0), S21 = 2Z/(2Z + z0).
    return -z0 / (2 * z + z0), 2 * z / (2 * z + z0)


def pair(x, fmt):
    if fmt == "ri":
        return f"{x.real:.12e} {x.imag:.12e}"
    ang = np.degrees(np.angle(x))
    if fmt == "ma":
        return f"{abs(x):.12e} {ang:.12e}"
    return f"{20 * np.log10(abs(x)):.12e} {ang:.12e}"


def fnum(f, unit):
    return f"{f / {'hz': 1, 'khz': 1e3, 'mhz': 1e6, 'ghz': 1e9}[unit]:.12g}"


def write(path: Path, lines):
    path.parent.mkdir(parents=True, exist_ok=True)
    text = "\n".join(lines) + "\n"
    path.write_bytes(text.encode("latin-1") if "latin1" in path.name else text.encode("utf-8"))


def s1p(fmt="ri", unit="ghz", z0=50.0, option=None, head=(), between=None):
    option = option if option is not None else f"# {unit} S {fmt} R {z0:g}"
    lines = list(head) + ([option] if option else [])
    s = s_reflection(model_z(FREQS), z0)
    for i, (f, x) in enumerate(zip(FREQS, s)):
        if between and i in between:
            lines.append(between[i])
        lines.append(f"{fnum(f, unit)} {pair(x, fmt)}")
    return lines


def s2p_rows(connection, fmt, unit, z0):
    s11, s21 = (s_series if connection == "series" else s_shunt)(model_z(FREQS), z0)
    return [f"{fnum(f, unit)} {pair(a, fmt)} {pair(b, fmt)} {pair(b, fmt)} {pair(a, fmt)}"
            for f, a, b in zip(FREQS, s11, s21)]


def good():
    write(TS / "v1_ri_ghz.s1p", s1p("ri", "ghz", head=["! reflection, RI, GHz"]))
    write(TS / "v1_ma_mhz_r75.s1p", s1p("ma", "mhz", 75.0, head=["! reflection, MA, MHz, 75 ohm"]))
    write(TS / "v1_db_khz.s1p", s1p("db", "khz", head=["! reflection, DB, kHz"]))
    write(TS / "v1_ri_hz.s1p", s1p("ri", "hz"))
    write(TS / "v1_comments_between_data.s1p",
          s1p("ri", "mhz", between={3: "! marker: calibration re-checked here", 7: "   ! indented comment", 9: ""}))
    write(TS / "v1_blank_lines_before_option.s1p", ["", "", "! header comment", "", s1p("ma", "ghz")[0]]
          + s1p("ma", "ghz")[1:])
    write(TS / "v1_no_option_line.s1p", s1p("ma", "ghz", option=""))  # defaults: GHz S MA R 50
    write(TS / "v1_options_any_order.s1p", s1p("ri", "mhz", 75.0, option="# R 75 ri MHz s"))
    write(TS / "v1_lowercase_trailing_comments.s1p",
          [ln + ("  ! point" if ln[0].isdigit() else "") for ln in s1p("db", "mhz", option="# mhz s db r 50")])
    write(TS / "v1_tabs.s1p", [ln.replace(" ", "\t") if ln[0].isdigit() else ln for ln in s1p("ri", "ghz")])
    write(TS / "v1_latin1_comment.s1p", ["! Prüfplatz 3, 23 °C"] + s1p("ri", "ghz"))
    write(TS / "v1_series_ma_mhz.s2p", ["! series-thru", "# MHz S MA R 50"] + s2p_rows("series", "ma", "mhz", 50.0))
    write(TS / "v1_shunt_db_khz_r75.s2p", ["! shunt-thru", "# kHz S DB R 75"] + s2p_rows("shunt", "db", "khz", 75.0))
    write(TS / "v1_series_ri_hz.s2p", ["# Hz S RI R 50"] + s2p_rows("series", "ri", "hz", 50.0))
    # Two-port file with a noise-parameter block after the network data (1.x spec).
    write(TS / "v1_with_noise_block.s2p", ["# MHz S RI R 50"] + s2p_rows("series", "ri", "mhz", 50.0)
          + ["! noise parameters", "1 0.5 0.9 10 0.2", "10 0.6 0.8 20 0.25"])
    # A two-port row wrapped over two lines (allowed by some writers).
    rows = s2p_rows("shunt", "ri", "mhz", 50.0)
    wrapped = []
    for r in rows:
        t = r.split()
        wrapped += [" ".join(t[:5]), "  " + " ".join(t[5:])]
    write(TS / "v1_wrapped_rows.s2p", ["# MHz S RI R 50"] + wrapped)

    # Touchstone 2.0.
    def v2(name, rows, n_ports=2, matrix=None, order="21_12", ref="[Reference] 50 50", fmt="ri", unit="mhz",
           extra=(), nfreq=True):
        lines = ["! Touchstone 2.0 fixture", "[Version] 2.0", f"# {unit} S {fmt} R 50", f"[Number of Ports] {n_ports}"]
        if order:
            lines.append(f"[Two-Port Data Order] {order}")
        if nfreq:
            lines.append(f"[Number of Frequencies] {len(rows)}")
        if ref:
            lines += ref.split("\n")
        if matrix:
            lines.append(f"[Matrix Format] {matrix}")
        lines += list(extra) + ["[Network Data]"] + rows + ["[End]"]
        write(TS / name, lines)

    v2("v2_full_series.ts", s2p_rows("series", "ri", "mhz", 50.0))
    s11, s21 = s_series(model_z(FREQS), 50.0)
    tri = [f"{fnum(f, 'mhz')} {pair(a, 'ma')} {pair(b, 'ma')} {pair(a, 'ma')}" for f, a, b in zip(FREQS, s11, s21)]
    v2("v2_upper_series.ts", tri, matrix="Upper", order="12_21", fmt="ma")
    v2("v2_lower_series.ts", tri, matrix="Lower", order=None, fmt="ma")
    v2("v2_upper_no_order.ts", tri, matrix="Upper", order=None, fmt="ma")
    v2("v2_reference_next_line.ts", s2p_rows("series", "ri", "mhz", 50.0), ref="[Reference]\n50 50")
    s = s_reflection(model_z(FREQS), 75.0)
    one = [f"{fnum(f, 'ghz')} {pair(x, 'db')}" for f, x in zip(FREQS, s)]
    v2("v2_one_port_r75.ts", one, n_ports=1, order=None, ref="[Reference] 75", fmt="db", unit="ghz")
    v2("v2_in_s2p_extension.s2p", s2p_rows("series", "ri", "mhz", 50.0))


def bad():
    """Each bad fixture breaks one rule; the comment says which line."""
    base = s1p("ri", "mhz")  # line 1 option, lines 2.. data
    write(TS / "bad_token.s1p", base[:5] + [base[5].replace("e", "x", 1)] + base[6:])  # line 6
    write(TS / "bad_short_row.s2p", ["# MHz S RI R 50"] + s2p_rows("series", "ri", "mhz", 50.0)[:3]
          + [" ".join(s2p_rows("series", "ri", "mhz", 50.0)[3].split()[:7])]
          + s2p_rows("series", "ri", "mhz", 50.0)[4:])  # line 5
    rows = s2p_rows("series", "ri", "mhz", 50.0)
    write(TS / "bad_decreasing.s2p", ["# MHz S RI R 50"] + rows[:6] + [rows[7], rows[6]] + rows[8:])  # line 9
    write(TS / "bad_option.s1p", ["# MHz S XY R 50"] + base[1:])  # line 1
    write(TS / "bad_option_after_data.s1p", base[1:4] + ["# MHz S RI R 50"] + base[4:])  # line 4
    write(TS / "bad_nan.s1p", base[:8] + [f"{fnum(FREQS[7], 'mhz')} nan 0.0"] + base[9:])  # line 9
    write(TS / "bad_negative_frequency.s1p", base[:1] + ["-1 0.1 0.2"] + base[2:])  # line 2
    write(TS / "bad_few_points.s1p", base[:6])
    # |S11| > 1: a reflection that returns more power than it receives (Re Z < 0).
    write(TS / "bad_active.s1p", base[:4] + [f"{fnum(FREQS[3], 'mhz')} -1.5 0.0"] + base[5:])  # line 5
    write(TS / "bad_ports_differ.s2p", ["# MHz S RI R 50 75"] + rows)  # line 1
    write(TS / "bad_table_named_s2p.s2p", ["Freq (Hz),|Z| (ohm),Phase (deg)"]
          + [f"{f:g},1.0,0.0" for f in FREQS])  # line 1
    write(TS / "bad_csv_rows_named_s1p.s1p", ["# MHz S RI R 50"] + [f"{f / 1e6:g},0.1,0.2" for f in FREQS])  # line 2
    write(TS / "bad_empty.s1p", ["! nothing but a comment"])
    (TS / "bad_binary.s1p").write_bytes(b"\x00\x01\x02PK\x03\x04" * 20)
    write(TS / "bad_v2_no_network_data.ts", ["[Version] 2.0", "# MHz S RI R 50", "[Number of Ports] 1", "[End]"])
    write(TS / "bad_v2_count.ts", ["[Version] 2.0", "# MHz S RI R 50", "[Number of Ports] 1",
                                   "[Number of Frequencies] 20", "[Network Data]"] + base[1:] + ["[End]"])  # line 4
    write(TS / "bad_three_port.s3p", ["# MHz S RI R 50", "1 " + " ".join(["0 0"] * 9)])
    write(TS / "bad_v1_ts_extension.ts", base)
    write(TAB / "bad_touchstone_named_csv.csv", base)


def tables():
    f = FREQS
    z = model_z(f)
    w = 2 * np.pi * f
    rows = lambda cols: [",".join(f"{c:.12e}" for c in r) for r in zip(*cols)]
    write(TAB / "zphase_header_units.csv", ["# analyser export (invented)", "Freq (kHz),|Z| (Ohm),Phase (deg)"]
          + rows([f / 1e3, np.abs(z), np.degrees(np.angle(z))]))
    write(TAB / "rx_semicolon_decimal_comma.csv", ["Frequency [MHz];R [Ohm];X [Ohm]"]
          + [r.replace(",", ";").replace(".", ",") for r in rows([f / 1e6, z.real, z.imag])])
    write(TAB / "ls_rs_tab.txt", ["! LCR meter (invented)", "Freq[Hz]\tLs[uH]\tRs[mOhm]"]
          + [r.replace(",", "\t") for r in rows([f, z.imag / w * 1e6, z.real * 1e3])])
    write(TAB / "cp_d_whitespace.dat", ["Meter: invented bench meter, 1 V", "Mode: parallel", "",
                                         "Freq (MHz)   Cp (pF)   D"]
          + [r.replace(",", "   ") for r in rows([f / 1e6, (1 / z).imag / w * 1e12, (1 / z).real / (1 / z).imag])])
    write(TAB / "zdb_phase_rad.csv", ["f_GHz,Z_dBohm,phase_rad"]
          + rows([f / 1e9, 20 * np.log10(np.abs(z)), np.angle(z)]))
    write(TAB / "no_header.csv", rows([f, np.abs(z), np.degrees(np.angle(z))]))
    write(TAB / "bad_ambiguous_l.csv", ["f,L,R"] + rows([f, z.imag / w, z.real]))
    write(TAB / "bad_text_in_data.csv", ["f (Hz),R (ohm),X (ohm)"] + rows([f[:5], z.real[:5], z.imag[:5]])
          + ["overload,,"] + rows([f[5:], z.real[5:], z.imag[5:]]))  # line 7
    write(TAB / "bad_ragged.csv", ["f (Hz),R (ohm),X (ohm)"] + rows([f[:3], z.real[:3], z.imag[:3]])
          + [f"{f[3]:.6e},{z.real[3]:.6e}"] + rows([f[4:], z.real[4:], z.imag[4:]]))  # line 5
    write(TAB / "bad_phase_no_unit.csv", ["f (Hz),|Z| (ohm),phase"] + rows([f, np.abs(z), np.angle(z) * 0.5]))
    write(TAB / "bad_unknown_columns.csv", ["time (s),V1 (V),V2 (V)"] + rows([f, z.real, z.imag]))
    write(TAB / "bad_unit.csv", ["f (Hz),Ls (furlong),Rs (ohm)"] + rows([f, z.imag / w, z.real]))
    write(TAB / "bad_duplicate_frequency_column.csv", ["f (Hz),Freq (kHz),R,X"] + rows([f, f / 1e3, z.real, z.imag]))
    write(TAB / "bad_zero_frequency.csv", ["f (Hz),R (ohm),X (ohm)"] + rows([np.r_[0.0, f[1:]], z.real, z.imag]))  # line 2


if __name__ == "__main__":
    good()
    bad()
    tables()
    print("fixtures written under", HERE)
