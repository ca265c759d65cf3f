"""Demo cases run once per session with fewer Monte Carlo draws (the shipped data, fewer samples)."""

import re
import shutil
import subprocess
from pathlib import Path

import pytest

from kinage.demo import copy_case, get_case

CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def reduce_scenario(path, samples=300, forecast=True):
    """Fewer draws of the star, the associations and the controls (same data, same seeds).

    ``forecast=False`` drops the campaign plan, so only the TOA fit runs for question 1 (the forecast has its
    own tests; this keeps the demo tests fast).
    """
    text = Path(path).read_text()
    if not forecast:
        text = re.sub(r"^(start|baseline|visits_per_year) = .*$\n", "", text, flags=re.M)
    text = re.sub(r"samples = \d+", f"samples = {samples}\nassociation_samples = 60\ncontrol_runs = 3", text, count=1)
    if "[ages]" in text:
        text = text.replace("[ages]\n", "[ages]\nsamples = 1000\n")
    Path(path).write_text(text)
    return Path(path)


def run_case(folder, name, samples=300, forecast=False):
    from kinage.io.scenario import load_scenario
    from kinage.pipeline import run_pipeline

    copy_case(get_case(name), folder)
    scenario = load_scenario(reduce_scenario(Path(folder) / "scenario.toml", samples, forecast))
    return run_pipeline(scenario, Path(folder) / "results")


@pytest.fixture(scope="session")
def radio_run(tmp_path_factory):
    return run_case(tmp_path_factory.mktemp("radio"), "radio")


@pytest.fixture(scope="session")
def xray_run(tmp_path_factory):
    return run_case(tmp_path_factory.mktemp("xray"), "xray", samples=200)


def chromium():
    """Path of a headless-capable chromium, or None."""
    for cand in ("/usr/bin/chromium", shutil.which("chromium") or "", shutil.which("chromium-browser") or ""):
        if cand and Path(cand).is_file():
            return cand
    return None


def screenshot(html_path, png_path, profile, height=2400):
    """Screenshot a page with headless chromium; returns the completed process."""
    browser = chromium()
    if browser is None:
        pytest.skip("no /usr/bin/chromium (Debian: apt-get install -y chromium); report screenshot not checked")
    return subprocess.run([browser, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", f"--screenshot={png_path}",
                           f"--window-size=1100,{height}", Path(html_path).resolve().as_uri()],
                          capture_output=True, text=True, timeout=120)
