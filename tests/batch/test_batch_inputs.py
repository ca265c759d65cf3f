"""A batch reads its tables once and never mixes batches with other inputs in one summary.

Expected behaviour is the project's rule (results recorded against the inputs they used; common practice,
no source).  Stars are traced with few draws; the rerun with a smaller table needs no cluster (its stars are
done), so the test costs one batch of 3 stars on one worker.
"""

import json
from pathlib import Path

from astropy.table import Table

DEMO = Path(__file__).resolve().parents[2] / "data_demo"

TEMPLATE = """
[star]
name = "template"

[trace]
associations = "associations.ecsv"
samples = 40
association_samples = 10
control_runs = 0
max_age = "2 Myr"
seed = 42
"""


def _inputs(d, n):
    d.mkdir(parents=True, exist_ok=True)
    Table.read(DEMO / "population.ecsv")[:n].write(d / f"stars{n}.ecsv", overwrite=True)
    if not (d / "associations.ecsv").exists():
        (d / "associations.ecsv").write_bytes((DEMO / "associations.ecsv").read_bytes())
        (d / "template.toml").write_text(TEMPLATE)
    return d / f"stars{n}.ecsv", d / "template.toml"


def test_a_table_changed_during_the_batch_does_not_reach_its_stars(tmp_path):
    from kinage.batch.runner import plan_batch, run_one_star

    stars, template = _inputs(tmp_path / "in", 1)
    plan = plan_batch(stars, template, tmp_path / "out")
    assoc = tmp_path / "in" / "associations.ecsv"
    text = assoc.read_text().splitlines()
    assoc.write_text("\n".join(text[:-1]) + "\n")  # one association fewer on disk, after the batch read it
    (tmp_path / "out" / "stars").mkdir(parents=True)
    rec = run_one_star(**plan.todo[0])
    assert rec["status"] == "ok", rec
    star = json.loads((Path(plan.todo[0]["final_dir"]) / "star.json").read_text())
    assert len(star["results"]["trace"]["associations"]) == len(Table.read(DEMO / "associations.ecsv"))


def test_rerun_with_a_smaller_star_table_says_so_and_lists_only_its_stars(tmp_path, capsys):
    from kinage.cli import main

    out = tmp_path / "out"
    stars3, template = _inputs(tmp_path / "in", 3)
    status = main(["batch", str(stars3), "--scenario", str(template), "--out", str(out), "--workers", "1",
                   "--no-figures"])
    assert status == 0, capsys.readouterr()
    stars2, _ = _inputs(tmp_path / "in", 2)
    capsys.readouterr()
    status = main(["batch", str(stars2), "--scenario", str(template), "--out", str(out), "--no-figures"])
    said = capsys.readouterr().out
    assert status == 0
    assert "differ from this folder's earlier batch" in said and "3 -> 2 stars" in said, said
    assert "done: 2 ok" in said
    summary = Table.read(out / "summary.ecsv")
    assert sorted(summary["name"]) == sorted(Table.read(stars2)["name"])  # not the third, stale star
    assert json.loads((out / "batch.json").read_text())["n_stars"] == 2
    recorded = json.loads((out / "batch-inputs.json").read_text())
    assert recorded["complete"] and recorded["settings"]["stars_table"]["rows"] == 2


def test_a_full_disk_while_a_star_is_written_leaves_no_temporary_folder(tmp_path, monkeypatch):
    import errno

    import kinage.batch.runner as runner

    stars, template = _inputs(tmp_path / "in", 1)
    plan = runner.plan_batch(stars, template, tmp_path / "out")
    (tmp_path / "out" / "stars").mkdir(parents=True)

    def full(path, data):  # POSIX ENOSPC, errno(3)
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(runner, "atomic_write", full)
    rec = runner.run_one_star(**plan.todo[0])
    assert rec["status"] == "failed" and rec["disk_errno"] == errno.ENOSPC
    assert list((tmp_path / "out" / "stars").iterdir()) == []  # no .tmp-* folder left filling the disk
