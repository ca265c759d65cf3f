"""Output folders own only what kinage wrote (a manifest), symlinked folders, and a swap that survives a crash.

Expected behaviour is the project's rule for user data (never delete what kinage did not write; common
practice, no source).  The runs use a scenario without stages (results.json and the report only), so each
takes about a second.
"""

import os
from pathlib import Path

import pytest

from .conftest import assert_one_line_error, files_under, run_cli, scenario_dict, write_case


def _snapshot(folder):
    return {f: (Path(folder) / f).read_bytes() for f in files_under(folder)}


def _star_only(folder):
    return write_case(folder, scenario_dict(tables=()))


def _first_run(tmp_path, capsys):
    scn = _star_only(tmp_path / "in")
    out = tmp_path / "out"
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 0, err
    return scn, out


def test_user_files_in_a_previous_runs_folder_are_refused_then_kept_with_force(tmp_path, capsys):
    scn, out = _first_run(tmp_path, capsys)
    (out / "notes.txt").write_text("my notes\n")
    (out / "my_analysis").mkdir()
    (out / "my_analysis" / "fit.py").write_text("print(1)\n")
    before = _snapshot(out)
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    line = assert_one_line_error(status, err, "--out", "kinage did not write", "notes.txt", "my_analysis/", "--force")
    assert _snapshot(out) == before, line
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet", "--force", "--seed", "4"], capsys)
    assert status == 0, err
    assert (out / "notes.txt").read_text() == "my notes\n" and (out / "my_analysis" / "fit.py").is_file()
    assert '"seed": 4' in (out / "results.json").read_text()  # the results were replaced
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]


def test_force_deletes_only_the_previous_runs_own_files(tmp_path, capsys):
    from kinage.io.ownership import manifest_entries, read_manifest, write_manifest

    scn, out = _first_run(tmp_path, capsys)
    (out / "trace").mkdir()
    stale = out / "trace" / "old_result.ecsv"
    stale.write_text("x\n")
    write_manifest(out, {**read_manifest(out), **manifest_entries(out, "run", [stale])})  # as if kinage wrote it
    (out / "trace" / "mine.txt").write_text("keep\n")  # a user's file inside a stage folder
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet", "--force"], capsys)
    assert status == 0, err
    assert not stale.exists() and (out / "trace" / "mine.txt").read_text() == "keep\n"
    assert "trace/mine.txt" not in read_manifest(out)  # still the user's: refused again without --force
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "trace/")


def test_edited_result_counts_as_the_users(tmp_path, capsys):
    scn, out = _first_run(tmp_path, capsys)
    (out / "report.md").write_text("my edited report\n")
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "report.md")
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet", "--force"], capsys)
    assert status == 0, err
    assert (out / "report.md.kept-1").read_text() == "my edited report\n"  # moved aside, not overwritten
    assert (out / "report.md").read_text() != "my edited report\n"


def test_run_into_its_own_input_folder_never_touches_the_inputs(tmp_path, capsys):
    folder = tmp_path / "case"
    scn = _star_only(folder)
    before = _snapshot(folder)
    status, _, err = run_cli(["run", scn, "--out", folder, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "own inputs", "scenario.toml")
    assert _snapshot(folder) == before
    status, _, err = run_cli(["run", scn, "--out", folder, "--quiet", "--force"], capsys)
    assert status == 0, err
    after = _snapshot(folder)
    assert all(after[f] == data for f, data in before.items())  # every input still there, byte for byte
    assert "results.json" in after


def test_another_verbs_results_are_not_replaced_by_run(tmp_path, capsys):
    from kinage.io.ownership import manifest_entries, write_manifest

    scn = _star_only(tmp_path / "in")
    out = tmp_path / "out"
    (out / "stars" / "A").mkdir(parents=True)
    (out / "stars" / "A" / "star.json").write_text("{}\n")
    write_manifest(out, manifest_entries(out, "batch"))  # as a batch would record it
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "stars/")
    assert (out / "stars" / "A" / "star.json").is_file()


def test_symlinked_out_stays_a_link_and_shares_the_lock(tmp_path, capsys):
    from kinage.io.rundir import output_lock

    scn = _star_only(tmp_path / "in")
    target = tmp_path / "c2"
    link = tmp_path / "link"
    link.symlink_to(target, target_is_directory=True)
    target.mkdir()
    for _ in range(2):  # the second run replaces the first's results through the link
        status, _, err = run_cli(["run", scn, "--out", link, "--quiet"], capsys)
        assert status == 0, err
        assert link.is_symlink() and (target / "results.json").is_file()
    with output_lock(target):
        status, _, err = run_cli(["run", scn, "--out", link, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "another kinage run")


def test_interrupted_swap_puts_the_old_folder_back(tmp_path, capsys, monkeypatch):
    scn, out = _first_run(tmp_path, capsys)
    before = _snapshot(out)
    import kinage.io.rundir as rundir

    real = os.replace
    calls = []

    def replace(src, dst):
        calls.append((src, dst))
        if Path(dst) == out.resolve() and ".staging-" in str(src):  # the old folder is already hidden
            raise KeyboardInterrupt  # a signal between the two renames
        return real(src, dst)

    monkeypatch.setattr(rundir.os, "replace", replace)
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet", "--seed", "8"], capsys)
    monkeypatch.setattr(rundir.os, "replace", real)
    assert status == 130 and "interrupted" in err
    assert any(".old-" in str(d) for _, d in calls)
    assert _snapshot(out) == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]


def test_a_crash_between_the_renames_is_recovered_by_the_next_start(tmp_path, capsys, monkeypatch):
    scn, out = _first_run(tmp_path, capsys)
    before = _snapshot(out)
    # the state a SIGKILL between the two renames leaves: the old folder hidden, the new one still staged
    os.replace(out, tmp_path / ".out.old-deadbeef")
    (tmp_path / ".out.staging-1-cafecafe").mkdir()
    import kinage.pipeline as pipeline

    def interrupted(name, *a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(pipeline, "_run_into", interrupted)  # the next run is interrupted too
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 130
    assert _snapshot(out) == before  # restored at its start, untouched by its interruption
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]


@pytest.mark.parametrize("verb", ["ages"])
def test_single_stage_out_keeps_user_files_and_refuses_a_clash(tmp_path, capsys, verb):
    scn = write_case(tmp_path / "in", scenario_dict(tables=("ages",), ages={"samples": 200}))
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine\n")
    status, _, err = run_cli([verb, scn, "--out", out, "--quiet"], capsys)
    assert status == 0, err
    written = [f for f in files_under(out) if f not in ("notes.txt", ".kinage-manifest.json")]
    assert written and (out / "notes.txt").read_text() == "mine\n"
    status, _, err = run_cli([verb, scn, "--out", out, "--quiet"], capsys)  # its own files: replaced
    assert status == 0, err
    victim = out / written[0]
    victim.write_bytes(b"the user's own file of that name\n")
    before = _snapshot(out)
    status, _, err = run_cli([verb, scn, "--out", out, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "kinage did not write", written[0].split("/")[0])
    assert _snapshot(out) == before


def test_results_record_the_hash_of_the_table_the_run_read(tmp_path, capsys, monkeypatch):
    import hashlib
    import json

    scn = write_case(tmp_path / "in", scenario_dict(tables=("trace",), trace={"samples": 30,
                                                                               "association_samples": 5}))
    assoc = tmp_path / "in" / "associations.ecsv"
    used = hashlib.sha256(assoc.read_bytes()).hexdigest()
    import kinage.pipeline as pipeline

    real = pipeline.run_stage

    def changed_on_disk(name, *a, **k):  # someone edits the table after kinage read it
        lines = assoc.read_text().splitlines()
        assoc.write_text("\n".join(lines[:-1]) + "\n")
        return real(name, *a, **k)

    monkeypatch.setattr(pipeline, "run_stage", changed_on_disk)
    out = tmp_path / "out"
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 0, err
    data = json.loads((out / "results.json").read_text())
    recorded = {Path(k).name: v for k, v in data["provenance"]["input_sha256"].items()}
    assert recorded["associations.ecsv"] == used != hashlib.sha256(assoc.read_bytes()).hexdigest()
    assert len(data["trace"]["associations"]) == 8  # the content read, all 8 demo associations


def test_python_run_force_keeps_user_files(tmp_path):
    import kinage

    scn, out = _star_only(tmp_path / "in"), tmp_path / "out"
    kinage.run(scn, out)
    (out / "notes.txt").write_text("mine\n")
    from kinage.errors import InputError

    with pytest.raises(InputError, match="notes.txt"):
        kinage.run(scn, out)
    kinage.run(scn, out, force=True)
    assert (out / "notes.txt").read_text() == "mine\n"


def test_out_dot_never_renames_the_working_folder(tmp_path, capsys, monkeypatch):
    scn = _star_only(tmp_path / "in")
    work = tmp_path / "work"
    work.mkdir()
    monkeypatch.chdir(work)
    inode = os.stat(work).st_ino
    for seed in ("1", "2"):
        status, _, err = run_cli(["run", scn, "--out", ".", "--quiet", "--seed", seed], capsys)
        assert status == 0, err
        assert os.stat(work).st_ino == inode  # the shell's working folder is still this folder
        assert f'"seed": {seed}' in (work / "results.json").read_text()


def test_a_folder_of_the_previous_version_keeps_the_users_files(tmp_path, capsys):
    # kinage 0.2 marked its run folders with an empty '.kinage-run' file and kept no manifest
    scn = _star_only(tmp_path / "in")
    out = tmp_path / "out"
    (out / "trace").mkdir(parents=True)
    for name in (".kinage-run", "results.json", "report.md", "trace/summary.ecsv"):
        (out / name).write_text("old\n")
    (out / "notes.txt").write_text("mine\n")
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    line = assert_one_line_error(status, err, "--out", "notes.txt")
    assert "results.json" not in line and "trace/" not in line
    (out / "notes.txt").unlink()
    status, _, err = run_cli(["run", scn, "--out", out, "--quiet"], capsys)
    assert status == 0, err
    assert (out / "results.json").read_text() != "old\n" and not (out / "trace").exists()


def test_demo_never_overwrites_a_users_file(tmp_path, capsys):
    from kinage.demo import copy_case, get_case

    out = tmp_path / "project"
    out.mkdir()
    (out / "README.md").write_text("my project\n")
    status, _, err = run_cli(["demo", "--out", out, "--quiet"], capsys)
    assert_one_line_error(status, err, "--out", "README.md")
    assert files_under(out) == ["README.md"] and (out / "README.md").read_text() == "my project\n"
    fresh = tmp_path / "fresh"
    copy_case(get_case(None), fresh)
    copy_case(get_case(None), fresh)  # its own copies may be copied again
    assert (fresh / ".kinage-manifest.json").is_file()
