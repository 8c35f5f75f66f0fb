"""The contracts stay byte-identical: the demo's JSON, netlists and Touchstone
files, and ``zfit info --json`` of every demo sweep, against the copies
committed in tests/data/demo_contract/ (made by ``python tests/contract.py``).

A change that legitimately alters one of these files regenerates the copy in
the same commit, and the diff of tests/data/demo_contract/ shows exactly what
changed. ``ALLOWED`` lists files whose differences are accepted, with why.
"""

from pathlib import Path

import pytest

from contract import DEMO, SNAPSHOT, contract_outputs

pytestmark = pytest.mark.skipif(not (DEMO / "cap_100n_shunt_thru.s2p").is_file(), reason="demo_sweeps/ not present")

#: file name -> why its content may differ from the committed copy (none today).
ALLOWED: dict[str, str] = {}


def test_demo_outputs_match_the_committed_contract(tmp_path):
    outputs = contract_outputs(tmp_path)
    committed = {p.name: p.read_text(encoding="utf-8") for p in SNAPSHOT.iterdir()}
    assert sorted(outputs) == sorted(committed)
    changed = [name for name, text in outputs.items() if text != committed[name] and name not in ALLOWED]
    assert changed == [], f"contract outputs changed: {changed}; regenerate with python tests/contract.py if intended"
