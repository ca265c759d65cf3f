"""Shared fixtures: a reduced copy of the invented demo scenario."""

import re
import shutil
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "data_demo"


def reduced_demo(folder, samples=300, extra_ages=""):
    """Copy the demo data into ``folder`` with fewer Monte Carlo draws; returns the scenario path."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for f in DEMO.iterdir():
        if f.is_file():
            shutil.copy2(f, folder / f.name)
    text = (folder / "scenario.toml").read_text()
    text = re.sub(r"samples = \d+", f"samples = {samples}\nassociation_samples = 60\ncontrol_runs = 3", text, count=1)
    text = text.replace("[ages]\n", "[ages]\nsamples = 1000\n" + extra_ages)
    (folder / "scenario.toml").write_text(text)
    return folder / "scenario.toml"


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory):
    """The whole pipeline on the reduced demo, run once per test session."""
    from kinage.io.scenario import load_scenario
    from kinage.pipeline import run_pipeline

    folder = tmp_path_factory.mktemp("demo")
    scenario = load_scenario(reduced_demo(folder))
    run = run_pipeline(scenario, folder / "results")
    return run
