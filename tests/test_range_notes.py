"""Notes that keep a user from misreading distances and the laser's energy."""

import json
from pathlib import Path

from thzarray.app.cli import main
from thzarray.app.jobs.context import near_ranges_note
from thzarray.source.filament import Filament

ROOT = Path(__file__).resolve().parents[1]


def test_ranges_no_farther_than_the_columns_are_named():
    # A column from z = 1 m to 1.5 m (geometry, common practice, no source): a receiver 1 m
    # from the origin lies behind the plasma, one at 2 m in front of it.
    fil = [Filament(0.5, start=(0.0, 0.0, 1.0)), Filament(0.2, start=(0.003, 0.0, 1.0))]
    note = near_ranges_note(fil, [1.0, 1.5, 2.0, 3.0], "budget ranges")
    assert note.startswith("budget ranges 1, 1.5 m from the origin")
    assert "(1.5 m)" in note
    assert near_ranges_note(fil, [2.0, 3.0], "budget ranges") is None


def test_a_laser_layout_says_each_column_gets_the_whole_pulse(capsys):
    # designs/laser_array.toml: nine columns, each made by the 1.5 mJ [laser] pulse.
    assert main(["check", str(ROOT / "designs" / "laser_array.toml"), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    notes = [n for n in out["notes"] if "describes each beam" in n]
    assert len(notes) == 1 and "9 columns" in notes[0] and "1.5 mJ" in notes[0]
