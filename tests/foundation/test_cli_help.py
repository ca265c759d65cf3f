"""Command-line help says what each verb does and writes, in the trade's spelling."""

import re

import pytest

from kinage.cli import build_parser, main
from kinage.params.registry import KINDS


def _help(capsys, *argv):
    with pytest.raises(SystemExit):
        main([*argv, "--help"])
    return capsys.readouterr().out


def test_help_spells_toa_in_capitals(capsys):
    # "TOA" (time of arrival) is an acronym, written in capitals (Lorimer & Kramer 2005, Handbook of Pulsar
    # Astronomy, ch. 8); file names (toas.ecsv) and scenario keys ([campaign] toas) keep their spelling
    for verb in ("", "forecast", "simulate", "fit", "trace", "ages", "run"):
        text = _help(capsys, *([verb] if verb else []))
        words = re.sub(r"\S*toas?\.\w+|\[campaign\] toas", "", text)
        assert not re.search(r"\btoas?\b", words), (verb, text)
    assert "Fit a TOA table" in _help(capsys, "fit")


def test_run_help_states_the_default_output_folder(capsys):
    text = " ".join(_help(capsys, "run").split())
    assert "default: the scenario's name + '-results'" in text


def test_parameter_sets_help_lists_the_kinds(capsys):
    text = " ".join(_help(capsys, "parameter-sets").split())
    assert all(k in text for k in KINDS)
    assert build_parser().parse_args(["parameter-sets", KINDS[0]]).kind == KINDS[0]


def test_a_verb_without_out_or_json_says_it_writes_nothing(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    scn = tmp_path / "star.toml"
    scn.write_text('[star]\nname = "Brisk-7 (invented)"\nspin_period = "4.6 s"\nspin_period_derivative = 2e-14\n'
                   '[ages]\nkinematic_age = "0.6 Myr"\nkinematic_age_error = "0.1 Myr"\nsamples = 200\n')
    assert main(["ages", str(scn)]) == 0
    out = capsys.readouterr().out
    assert "nothing was written" in out
    assert sorted(p.name for p in tmp_path.iterdir()) == ["star.toml"]
