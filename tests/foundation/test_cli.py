"""Command line: help, one-line errors with exit status 2, no tracebacks."""

import subprocess
import sys

import pytest

from kinage.cli import build_parser, main

VERBS = ["forecast", "simulate", "fit", "trace", "ages", "run", "demo", "batch", "keys", "parameter-sets"]


@pytest.mark.parametrize("verb", VERBS)
def test_each_verb_has_help_with_example(verb, capsys):
    with pytest.raises(SystemExit) as info:
        main([verb, "--help"])
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert "example:" in out and f"kinage {verb}" in out


def test_computing_verbs_share_options():
    parser = build_parser()
    for verb in ("forecast", "simulate", "fit", "trace", "ages", "run", "demo", "batch"):
        sub = parser._subparsers._group_actions[0].choices[verb]  # noqa: SLF001
        opts = {o for a in sub._actions for o in a.option_strings}  # noqa: SLF001
        assert {"--json", "--quiet"} <= opts, verb
        assert "--out" in opts and "--seed" in opts


def test_bad_scenario_is_one_line_per_problem_exit_2(tmp_path, capsys):
    p = tmp_path / "bad.toml"
    p.write_text('[star]\nra = 10\ndec = 5\nparallax = 3\nparallax_error = -0.3\npm_dec = "4 pc"\n')
    code = main(["ages", str(p), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert any("[star] parallax_error: must be positive (got -0.3 mas)" in line for line in err)
    assert any("[star] pm_dec: expected a quantity of" in line for line in err)
    assert not any("Traceback" in line for line in err)


def test_missing_scenario_file(capsys):
    assert main(["trace", "/no/such/file.toml"]) == 2
    assert "file not found" in capsys.readouterr().err


def test_verb_needs_its_table(tmp_path, capsys):
    p = tmp_path / "s.toml"
    p.write_text("[star]\nra = 1\ndec = 2\n")
    assert main(["forecast", str(p)]) == 2
    assert "[campaign]" in capsys.readouterr().err


def test_keys_and_parameter_sets_list(capsys):
    assert main(["keys", "trace"]) == 0
    assert "velocity_prior" in capsys.readouterr().out
    assert main(["parameter-sets", "potential"]) == 0
    out = capsys.readouterr().out
    assert "MWPotential2014" in out and "Bovy 2015" in out


def test_console_script_runs_without_traceback(tmp_path):
    p = tmp_path / "s.toml"
    p.write_text("[star]\nra = 1\ndec = 2\n[bogus]\n")
    r = subprocess.run([sys.executable, "-m", "kinage.cli", "run", str(p)], capture_output=True, text=True)
    assert r.returncode == 2
    assert "[bogus]" in r.stderr and "Traceback" not in r.stderr
