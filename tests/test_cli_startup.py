"""The command line starts without loading the heavy libraries.

``zfit --help`` must answer fast; the measure here is what it imports, not a
time (no timing assertions in tests).
"""

import subprocess
import sys

HEAVY = ("matplotlib", "skrf", "scipy.optimize", "scipy.signal", "pandas", "dask")


def test_help_imports_no_heavy_library():
    code = (
        "import sys\n"
        "from typer.testing import CliRunner\n"
        "from zfit.cli._app import app\n"
        "r = CliRunner().invoke(app, ['--help'])\n"
        "assert r.exit_code == 0, r.output\n"
        f"print(','.join(m for m in {HEAVY!r} if m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"zfit --help imported: {out.stdout.strip()}"


def test_version_prints_package_version():
    import zfit

    out = subprocess.run([sys.executable, "-m", "zfit", "--version"], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == f"zfit {zfit.__version__}"
