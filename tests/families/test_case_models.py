"""Model entries of a case file: declared spins are enforced, family options can be set."""
from __future__ import annotations

import evidence1d
from casefactory import check_command, edit_file


def test_family_spin_declared_rejects_other_spin(valid_case, capsys, monkeypatch):
    from evidence1d.families.spinon import SpinonFamily
    monkeypatch.setattr(SpinonFamily, "spins", (0.5,))
    edit_file(valid_case, "spin: 0.5", "spin: 1")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "spin 0.5 only" in err and len(err.splitlines()) == 1, err


def test_model_entry_options_override_the_card(valid_case, capsys):
    edit_file(valid_case, "models:\n  - spinon_continuum",
              "models:\n  - spinon_continuum\n"
              "  - {name: gapped_spin_wave, options: {interchain: 2}}")
    case = evidence1d.load_case(valid_case)
    assert case.models["gapped_spin_wave"].card.options["interchain"] == 2
    assert case.problem("gapped_spin_wave").family is not None
    edit_file(valid_case, "options: {interchain: 2}", "options: {no_such_option: 2}")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "no_such_option" in err and len(err.splitlines()) == 1, err


def test_figures_block_is_read_and_checked(valid_case, capsys):
    edit_file(valid_case, "seed: 7", "seed: 7\nfigures: {temperature_axis: log, cuts: all}")
    case = evidence1d.load_case(valid_case)
    assert case.figures == {"temperature_axis": "log", "cuts": "all"}
    edit_file(valid_case, "temperature_axis: log", "temperature_axis: sideways")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "temperature_axis" in err and len(err.splitlines()) == 1, err
