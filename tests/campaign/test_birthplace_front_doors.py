"""kinage forecast --birthplace, kinage.forecast(birthplace=True), [campaign] birthplace_forecast: outputs and
bad input (invented star and associations only)."""

import json
import sys
import warnings
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))

from campaign_helpers import raw_scenario, write_scenario  # noqa: E402

import kinage  # noqa: E402
from kinage.cli import main  # noqa: E402
from kinage.errors import InputError  # noqa: E402

pytestmark = pytest.mark.filterwarnings("ignore")

HYPOTHESIS_KEYS = {"name", "probability_now", "probability_after_mean", "probability_after_q05",
                   "probability_after_q50", "probability_after_q95", "decisive_probability"}


def test_cli_birthplace_json_figure_and_sentence(tmp_path, capsys):
    path = write_scenario(tmp_path, toa_error="10 us", samples=300, outcomes=20)
    code = main(["forecast", str(path), "--birthplace", "--json", str(tmp_path / "f.json"), "--out",
                 str(tmp_path / "out")])
    assert code == 0
    out = capsys.readouterr().out
    assert "chance of settling the birthplace" in out and "today: " in out
    d = json.loads((tmp_path / "f.json").read_text())["birthplace"]
    names = [h["name"] for h in d["hypotheses"]]
    assert names[-1] == "field" and {"Brennick Group", "Ostrava Drift"} <= set(names)
    for h in d["hypotheses"]:
        assert HYPOTHESIS_KEYS <= set(h)
        assert h["probability_after_q05"] <= h["probability_after_q50"] <= h["probability_after_q95"]
        assert 0.0 <= h["decisive_probability"] <= 1.0
    assert sum(h["probability_now"] for h in d["hypotheses"]) == pytest.approx(1.0)
    assert d["n_outcomes"] == 20 and d["method"] in ("reweight", "fresh", "reweight+fresh")
    assert len(d["outcome_methods"]) == 20 and d["smallest_effective_sample_size"] >= 1.0
    # a precise campaign narrows the kinematic age of the followed association
    assert d["kinematic_age_width_after_yr"] < d["kinematic_age_width_now_yr"]
    # the decisive probability: share of outcomes in which some hypothesis reaches 0.9
    assert max(h["decisive_probability"] for h in d["hypotheses"]) <= d["decisive_probability"] + 1e-12
    assert [s["length_yr"] for s in d["sweep"]][0] == 1.0 and d["sweep"][-1]["length_yr"] == 8.0
    assert (tmp_path / "out" / "forecast_birthplace.png").stat().st_size > 10_000
    assert (tmp_path / "out" / "forecast_birthplace.ecsv").exists()


@pytest.mark.parametrize("drop, extra, key", [
    (("trace",), [], "[trace] associations"),
    (("trace.associations",), [], "[trace] associations"),
    ((), ["--outcomes", "19"], "--outcomes"),
    ((), ["--outcomes", "100001"], "--outcomes"),
])
def test_cli_bad_input_one_line_exit_2_nothing_written(tmp_path, capsys, drop, extra, key):
    path = write_scenario(tmp_path, drop=drop, samples=100, outcomes=20)
    code = main(["forecast", str(path), "--birthplace", "--json", str(tmp_path / "f.json"), "--out",
                 str(tmp_path / "out"), *extra])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and key in err[0]
    assert not (tmp_path / "f.json").exists() and not (tmp_path / "out").exists()


def test_cli_without_campaign_names_it(tmp_path, capsys):
    path = write_scenario(tmp_path, drop=("campaign",))
    assert main(["forecast", str(path), "--birthplace", "--json", str(tmp_path / "f.json")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "[campaign]" in err[0] and not (tmp_path / "f.json").exists()


@pytest.mark.parametrize("outcomes", [5, 200000])
def test_scenario_outcomes_out_of_range(tmp_path, capsys, outcomes):
    path = write_scenario(tmp_path, outcomes=outcomes)
    assert main(["forecast", str(path), "--birthplace", "--json", str(tmp_path / "f.json")]) == 2
    err = capsys.readouterr().err
    assert "outcomes" in err and not (tmp_path / "f.json").exists()


def test_python_front_door(tmp_path):
    scn = kinage.scenario_from_dict(raw_scenario(tmp_path, toa_error="300 us", samples=300, outcomes=30))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        res = kinage.forecast(scn, birthplace=True)
    d = res.to_dict()["birthplace"]
    assert d["n_outcomes"] == 30 and d["method"] == "reweight"
    # an uninformative campaign (pm error ~50 mas/yr against today's 4): tomorrow as today
    for h in d["hypotheses"]:
        assert h["probability_after_q05"] == pytest.approx(h["probability_now"], abs=0.08)
        assert h["probability_after_q95"] == pytest.approx(h["probability_now"], abs=0.08)
    assert set(d["schedules"]) == {"even", "parallax", "motion"}
    assert "settling the birthplace" in res.summary()
    assert "birthplace" in res.plot_kinds() and res.plot("birthplace").axes
    with pytest.raises(InputError, match="outcomes"):
        kinage.forecast(scn, birthplace=True, outcomes=3)
    bare = kinage.scenario_from_dict({k: v for k, v in raw_scenario(tmp_path).items() if k != "trace"})
    with pytest.raises(InputError, match="associations"):
        kinage.forecast(bare, birthplace=True)


def test_run_with_birthplace_forecast_key(tmp_path):
    raw = raw_scenario(tmp_path, toa_error="300 us", samples=300, outcomes=20)
    raw["campaign"]["birthplace_forecast"] = True
    run = kinage.run(kinage.scenario_from_dict(raw), tmp_path / "run", report=False)
    assert not run.failed
    d = json.loads((tmp_path / "run" / "results.json").read_text())
    assert d["forecast"]["birthplace"]["n_outcomes"] == 20
    # the trace stage is the birthplace forecast's own trace of today's astrometry (same seed): same numbers
    assert d["trace"]["field_probability"] == pytest.approx(d["forecast"]["birthplace"]["hypotheses"][-1]
                                                            ["probability_now"])
    assert (tmp_path / "run" / "forecast" / "forecast_birthplace.png").exists()


def test_schedule_birthplace_picks_the_most_informative(tmp_path, capsys):
    # [campaign] schedule = "birthplace": the schedule with the largest expected information about the
    # birthplace (Lindley 1956: expected entropy reduction) among the same visits placed 'even', 'parallax'
    # and 'motion'; the forecast is then made with it
    path = write_scenario(tmp_path, toa_error="10 us", samples=300, outcomes=20)
    text = path.read_text().replace("[campaign]\n", '[campaign]\nschedule = "birthplace"\n')
    path.write_text(text)
    assert main(["forecast", str(path), "--birthplace", "--compare-schedules", "--quiet", "--json",
                 str(tmp_path / "f.json")]) == 0
    table = capsys.readouterr().out
    assert "expected information (bits)" in table
    d = json.loads((tmp_path / "f.json").read_text())
    chosen = d["birthplace"]["chosen_schedule"]
    assert chosen in ("even", "parallax", "motion") and d["schedule"] == chosen
    assert any(chosen in note and "bits" in note for note in d["birthplace"]["notes"])
    # without the birthplace forecast the schedule cannot be chosen: one line naming the key
    assert main(["forecast", str(path), "--json", str(tmp_path / "g.json")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "[campaign] schedule" in err[0] and not (tmp_path / "g.json").exists()
