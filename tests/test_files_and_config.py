"""Files and settings, for real: the one writer, links, read-only files, signals,
bad folder entries, per-file configuration, standard input and the line format.

Everything runs on temporary directories with real symbolic links, real file
modes and real signals to a child process. Running as root, "unreadable" is
produced by dropping the two capabilities that let root read anything
(`setpriv`, util-linux), so the test means the same for every user.
"""

from __future__ import annotations

import os
import shutil
import signal
import stat
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
from clirunner import ROOT, dagward
from dagward.fileio import ReadOnlyFile, write_atomic

CYCLE = (ROOT / "samples" / "broken" / "cycle.dag").read_text()
DUPLICATE = "age -> sick_days\nage -> sick_days\n"
UNFORMATTED = "age->sick_days   # reason\n"
FORMATTED = "age -> sick_days  # reason\n"


def _mode(path: Path) -> int:
    return stat.S_IMODE(path.lstat().st_mode)


def _leftovers(directory: Path) -> list[str]:
    return sorted(p.name for p in directory.iterdir() if p.name.endswith(".tmp"))


def _run_with_umask(mask: int, *args: str, cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run(
        [sys.executable, "-m", "dagward", *args],
        cwd=cwd,
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
        preexec_fn=lambda: os.umask(mask),
    )


# --- the writer ------------------------------------------------------------------------


@pytest.mark.parametrize(("mask", "expected"), [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664)])
def test_new_files_get_the_mode_the_umask_gives(tmp_path: Path, mask: int, expected: int) -> None:
    out = tmp_path / "x.dot"
    done = _run_with_umask(
        mask, "render", str(ROOT / "samples/wellness.dag"), "-o", str(out), cwd=tmp_path
    )
    assert done.returncode == 0, done.stderr
    assert _mode(out) == expected
    report = tmp_path / "report.json"
    done = _run_with_umask(
        mask,
        "check",
        str(ROOT / "samples/wellness.dag"),
        "--format",
        "json",
        "--output",
        str(report),
        cwd=tmp_path,
    )
    assert _mode(report) == expected
    assert _leftovers(tmp_path) == []


def test_existing_file_keeps_its_mode_and_owner(tmp_path: Path) -> None:
    target = tmp_path / "plot.svg"
    write_atomic(target, "first\n")
    os.chmod(target, 0o640)
    if os.geteuid() == 0:
        os.chown(target, 65534, 65534)  # as root: the owner must not become root
    write_atomic(target, "second ⫫\n")
    assert target.read_text(encoding="utf-8") == "second ⫫\n"
    assert _mode(target) == 0o640
    if os.geteuid() == 0:
        assert (target.stat().st_uid, target.stat().st_gid) == (65534, 65534)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plot.svg"]


def test_failed_write_leaves_the_old_file_and_no_temporary(tmp_path: Path) -> None:
    target = tmp_path / "keep.txt"
    target.write_text("old")
    with pytest.raises(UnicodeEncodeError):
        write_atomic(target, "bad \udcff surrogate")
    assert target.read_text() == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.txt"]


def test_read_only_file_is_refused(tmp_path: Path) -> None:
    target = tmp_path / "locked.dag"
    target.write_text("old\n")
    os.chmod(target, 0o444)
    with pytest.raises(ReadOnlyFile):
        write_atomic(target, "new\n")
    assert target.read_text() == "old\n" and _mode(target) == 0o444


def test_writing_through_a_symbolic_link(tmp_path: Path) -> None:
    real = tmp_path / "real"
    real.mkdir()
    (real / "study.dag").write_text("old\n")
    link = tmp_path / "study.dag"
    link.symlink_to(real / "study.dag")
    write_atomic(link, "new\n")
    assert link.is_symlink() and (real / "study.dag").read_text() == "new\n"
    assert _leftovers(tmp_path) == [] and _leftovers(real) == []


_SLOW_WRITER = textwrap.dedent(
    """
    import os, sys, time
    import dagward.fileio as fileio

    real_fsync = os.fsync

    def slow_fsync(fd):
        real_fsync(fd)
        print("writing", flush=True)  # the temporary file exists now
        time.sleep(60)

    os.fsync = slow_fsync
    fileio.write_atomic(sys.argv[1], "new\\n")
    """
)


@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGINT])
def test_a_signal_mid_write_leaves_no_temporary_file(tmp_path: Path, sig: int) -> None:
    target = tmp_path / "study.dag"
    target.write_text("old\n")
    child = subprocess.Popen(
        [sys.executable, "-c", _SLOW_WRITER, str(target)],
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert child.stdout.readline() == "writing\n", child.stderr.read()
        assert len(_leftovers(tmp_path)) == 1  # the hidden temporary file is there
        child.send_signal(sig)
        child.wait(timeout=30)
    finally:
        if child.poll() is None:
            child.kill()
    # SIGTERM ends the process as the signal does; Ctrl-C raises KeyboardInterrupt,
    # which Python ends by the same signal when nothing catches it
    assert child.returncode == -sig, child.stderr.read()
    assert _leftovers(tmp_path) == []
    assert target.read_text() == "old\n"


def test_sigterm_to_the_command_line_mid_fmt(tmp_path: Path) -> None:
    """The real `dagward fmt` process, stopped by SIGTERM while writing."""
    target = tmp_path / "study.dag"
    target.write_text(UNFORMATTED)
    driver = _SLOW_WRITER.replace(
        'fileio.write_atomic(sys.argv[1], "new\\n")',
        'from dagward.cli import main\nsys.exit(main(["fmt", sys.argv[1]]))',
    )
    child = subprocess.Popen(
        [sys.executable, "-c", driver, str(target)],
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert child.stdout.readline() == "writing\n"
        child.send_signal(signal.SIGTERM)
        child.wait(timeout=30)
    finally:
        if child.poll() is None:
            child.kill()
    assert child.returncode == -signal.SIGTERM
    assert _leftovers(tmp_path) == [] and target.read_text() == UNFORMATTED


# --- fmt on links and read-only files ----------------------------------------------------


def test_fmt_writes_through_a_link_and_keeps_mode(tmp_path: Path) -> None:
    real = tmp_path / "causal"
    real.mkdir()
    (real / "study.dag").write_text(UNFORMATTED)
    os.chmod(real / "study.dag", 0o664)
    if os.geteuid() == 0:
        os.chown(real / "study.dag", 65534, 65534)  # fmt as root must not take the file over
    link = tmp_path / "study.dag"
    link.symlink_to("causal/study.dag")
    run = dagward("fmt", str(link))
    assert run.code == 0, run.err
    assert link.is_symlink() and os.readlink(link) == "causal/study.dag"
    assert (real / "study.dag").read_text() == FORMATTED
    assert _mode(real / "study.dag") == 0o664
    if os.geteuid() == 0:
        owner = (real / "study.dag").stat()
        assert (owner.st_uid, owner.st_gid) == (65534, 65534)


def test_fmt_refuses_a_read_only_file_and_formats_the_others(tmp_path: Path) -> None:
    (tmp_path / "a.dag").write_text(UNFORMATTED)
    (tmp_path / "b.dag").write_text(UNFORMATTED)
    os.chmod(tmp_path / "a.dag", 0o444)
    run = dagward("fmt", str(tmp_path))
    assert run.code == 2
    assert f"dagward: error: {tmp_path / 'a.dag'}: read-only, not reformatted" in run.err
    assert (tmp_path / "a.dag").read_text() == UNFORMATTED
    assert _mode(tmp_path / "a.dag") == 0o444
    assert (tmp_path / "b.dag").read_text() == FORMATTED
    # --check does not write, so a read-only file is fine there
    os.chmod(tmp_path / "b.dag", 0o444)
    assert dagward("fmt", "--check", str(tmp_path / "b.dag")).code == 0


# --- an output that is one of the inputs -------------------------------------------------


def test_output_equal_to_an_input_is_refused(tmp_path: Path) -> None:
    study = tmp_path / "study.dag"
    study.write_text(CYCLE)
    before = study.read_bytes()
    for args in (
        ("check", str(study), "--output", str(study)),
        ("check", str(tmp_path), "--output", str(study)),  # found inside a checked folder
        ("render", str(study), "-o", str(study)),
        ("adjustment", str(study), "--output", str(tmp_path / "." / "study.dag")),
        ("fmt", "--diff", str(tmp_path), "--output", str(study)),
    ):
        run = dagward(*args)
        assert run.code == 2, (args, run.out, run.err)
        assert "is one of the inputs" in run.err and len(run.err.splitlines()) == 1
        assert study.read_bytes() == before
    # through a symbolic link and a hard link too
    (tmp_path / "alias.dag").symlink_to(study)
    os.link(study, tmp_path / "hard.dag")
    for other in ("alias.dag", "hard.dag"):
        run = dagward("check", str(study), "--output", str(tmp_path / other))
        assert run.code == 2 and "is one of the inputs" in run.err
    assert study.read_bytes() == before


# --- bad entries in a checked folder -----------------------------------------------------


def _unprivileged() -> list[str]:
    """A command prefix under which file permissions bind, even for root."""
    if os.geteuid() != 0:
        return []
    assert shutil.which("setpriv"), "setpriv (util-linux) is needed to test as root"
    caps = "-dac_override,-dac_read_search"
    return ["setpriv", "--bounding-set", caps, f"--inh-caps={caps}"]


def test_bad_entries_are_reported_and_the_rest_is_checked(tmp_path: Path) -> None:
    study = tmp_path / "study"
    study.mkdir()
    (study / "good.dag").write_text(CYCLE)
    (study / "dangling.dag").symlink_to(study / "gone.dag")
    (study / "loop_a.dag").symlink_to(study / "loop_b.dag")
    (study / "loop_b.dag").symlink_to(study / "loop_a.dag")
    (study / "secret.dag").write_text("age -> sick_days\n")
    os.chmod(study / "secret.dag", 0o000)
    (study / "z").mkdir()
    (study / "z" / "also_good.dag").write_text("age -> sick_days\n")
    (study / "locked").mkdir()
    (study / "locked" / "hidden.dag").write_text("age -> sick_days\n")
    os.chmod(study / "locked", 0o000)
    done = subprocess.run(
        [*_unprivileged(), sys.executable, "-m", "dagward", "check", str(study)],
        cwd=tmp_path,
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        capture_output=True,
        text=True,
        timeout=300,
    )
    os.chmod(study / "locked", 0o755)
    assert "Traceback" not in done.stderr
    assert done.returncode == 2, done.stderr
    errors = done.stderr.splitlines()
    assert sorted(errors) == sorted(
        [
            f"dagward: error: {study}/dangling.dag: symbolic link to a file that does not exist "
            "(not checked)",
            f"dagward: error: {study}/loop_a.dag: symbolic link loop (not checked)",
            f"dagward: error: {study}/loop_b.dag: symbolic link loop (not checked)",
            f"dagward: error: {study}/secret.dag: cannot be read (permission denied) (not checked)",
            f"dagward: error: {study}/locked: folder cannot be read (permission denied) "
            "(not checked)",
        ]
    )
    # the good files were checked: the cycle is reported, and both are counted
    assert f"{study}/good.dag:4:1: error [cycle]" in done.stdout
    assert "1 error, 0 warnings in 2 files" in done.stdout


# --- configuration found from the checked files ------------------------------------------


def _study(root: Path, table: str | None) -> Path:
    root.mkdir(parents=True)
    if table is not None:
        (root / "pyproject.toml").write_text(table)
    (root / "causal").mkdir()
    (root / "causal" / "d.dag").write_text(DUPLICATE)
    return root


def test_settings_come_from_the_checked_files_not_the_current_directory(tmp_path: Path) -> None:
    strict = _study(
        tmp_path / "strict", '[tool.dagward]\n[tool.dagward.severity]\nduplicate-arrow = "error"\n'
    )
    lax = _study(tmp_path / "lax", '[tool.dagward]\ndisable = ["duplicate-arrow"]\n')
    # a package's own pyproject.toml without the table is passed over
    (strict / "causal" / "pyproject.toml").write_text('[project]\nname = "analysis"\n')
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (elsewhere / "pyproject.toml").write_text('[tool.dagward]\ndisable = ["cycle"]\n')
    run = dagward("check", str(strict), str(lax), cwd=elsewhere)
    assert run.code == 1, run.err
    assert f"{strict}/causal/d.dag:2:1: error [duplicate-arrow]" in run.out
    assert str(lax) not in run.out  # disabled there
    assert "1 error, 0 warnings in 2 files" in run.out
    # --no-config: the defaults everywhere (a warning in both, exit 0)
    run = dagward("check", str(strict), str(lax), "--no-config", cwd=elsewhere)
    assert run.code == 0 and run.out.count("warning [duplicate-arrow]") == 2
    # --config: that file for every checked file
    run = dagward("check", str(strict), "--config", str(lax / "pyproject.toml"), cwd=elsewhere)
    assert run.code == 0 and "duplicate-arrow" not in run.out
    # commands about one file find its settings too
    run = dagward("fmt", "--check", str(strict / "causal" / "d.dag"), cwd=elsewhere)
    assert run.code == 0


def test_a_broken_table_is_reported_even_from_elsewhere(tmp_path: Path) -> None:
    study = _study(tmp_path / "s", '[tool.dagward]\nfail_on = "warning"\n')
    run = dagward("check", str(study), cwd=tmp_path)
    assert run.code == 2 and "unknown key `fail_on`" in run.err


def test_everything_excluded_and_an_include_that_matches_nothing(tmp_path: Path) -> None:
    study = _study(tmp_path / "s", '[tool.dagward]\nexclude = ["causal/**"]\n')
    run = dagward("check", str(study), cwd=tmp_path)
    assert run.code == 0
    assert run.err.strip() == (
        f"dagward: no .dag files to check in {study}: `exclude` in {study}/pyproject.toml "
        "leaves out the only one"
    )
    (study / "pyproject.toml").write_text('[tool.dagward]\ninclude = ["models/*.dag"]\n')
    run = dagward("check", str(study), cwd=tmp_path)
    assert (
        f"dagward: the include pattern `models/*.dag` ({study}/pyproject.toml) matches no file "
        f"in {study}"
    ) in run.err
    assert "no .dag files found" in run.err
    # checking a subfolder says nothing about patterns for other folders
    (study / "pyproject.toml").write_text(
        '[tool.dagward]\ninclude = ["causal/*.dag", "models/*.dag"]\n'
    )
    run = dagward("check", str(study / "causal"), cwd=tmp_path)
    assert run.err == "" and "in 1 file" in run.out
    run = dagward("check", str(study), cwd=tmp_path)
    assert "`models/*.dag`" in run.err and "`causal/*.dag`" not in run.err


# --- standard input and the line format ---------------------------------------------------


def test_check_reads_stdin_with_a_name_for_positions_and_settings(tmp_path: Path) -> None:
    study = _study(
        tmp_path / "s", '[tool.dagward]\n[tool.dagward.severity]\nduplicate-arrow = "error"\n'
    )
    name = str(study / "causal" / "unsaved.dag")
    run = dagward("check", "-", "--stdin-filename", name, cwd=tmp_path, stdin=DUPLICATE.encode())
    assert run.code == 1
    assert run.out.startswith(f"{name}:2:1: error [duplicate-arrow]")
    run = dagward("check", "-", cwd=tmp_path, stdin=DUPLICATE.encode())
    assert run.code == 0 and run.out.startswith("<stdin>:2:1: warning [duplicate-arrow]")
    run = dagward("check", "-", "samples", stdin=b"")
    assert run.code == 2 and "cannot be combined" in run.err


def test_fmt_reads_stdin_and_prints_the_result(tmp_path: Path) -> None:
    run = dagward("fmt", "-", cwd=tmp_path, stdin=UNFORMATTED.encode())
    assert run.code == 0 and run.out == FORMATTED
    assert dagward("fmt", "-", "--check", stdin=UNFORMATTED.encode()).code == 1
    assert dagward("fmt", "-", "--check", stdin=FORMATTED.encode()).code == 0
    run = dagward("fmt", "-", "--stdin-filename", "x.dag", stdin=b"age -> \n")
    assert run.code == 1 and run.out == ""
    assert run.err.startswith("x.dag:1:") and "syntax-error" in run.err
    assert sorted(p.name for p in tmp_path.iterdir()) == []


def test_line_format_puts_everything_on_one_line() -> None:
    run = dagward("check", "samples/broken/cycle.dag", "--format", "line")
    assert run.code == 1 and run.err == ""
    assert run.out == (
        "samples/broken/cycle.dag:4:1: error: the arrows form a cycle fatigue -> stress -> "
        "sleep_loss -> fatigue; a diagram must be acyclic: remove an arrow or split a variable "
        "by time (see samples/broken/cycle.dag:2:1: arrow stress -> sleep_loss; "
        "samples/broken/cycle.dag:3:1: arrow sleep_loss -> fatigue) [cycle]\n"
    )
    # the shape editors' problem matchers read: file:line:col: severity: message [rule]
    import re

    shape = re.compile(
        r"^(?P<file>[^:]+):(?P<line>\d+):(?P<col>\d+): "
        r"(?P<sev>error|warning|info): (?P<msg>.*) \[(?P<rule>[a-z-]+)\]$"
    )
    run = dagward("check", "samples", "--format", "line")
    assert run.out and all(shape.match(x) for x in run.out.splitlines())


def test_the_slow_writer_really_blocks(tmp_path: Path) -> None:
    """The slow writer above really blocks: without the signal it would still be writing."""
    target = tmp_path / "t.dag"
    target.write_text("old\n")
    child = subprocess.Popen(
        [sys.executable, "-c", _SLOW_WRITER, str(target)],
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        stdout=subprocess.PIPE,
        text=True,
    )
    try:
        assert child.stdout.readline() == "writing\n"
        time.sleep(0.5)
        assert child.poll() is None and target.read_text() == "old\n"
    finally:
        child.kill()
        child.wait()


def test_output_to_a_pipe_or_dev_stdout_is_written_directly(tmp_path: Path) -> None:
    before = (os.path.islink("/dev/stdout"), os.readlink("/dev/stdout"))
    done = subprocess.run(
        [sys.executable, "-m", "dagward", "check", "samples/broken/cycle.dag", "--format", "json",
         "--output", "/dev/stdout"],
        cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)}, capture_output=True, text=True,
        timeout=300,
    )  # fmt: skip
    assert done.returncode == 1, done.stderr
    assert '"rule": "cycle"' in done.stdout
    # not replaced by a regular file (as root a rename over it would succeed)
    assert before == (os.path.islink("/dev/stdout"), os.readlink("/dev/stdout"))
