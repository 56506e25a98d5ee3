"""The steps of dagward's GitHub Action (`action.yml` at the repository root).

Each step of the composite action runs `python run.py STEP`; the logic lives here
so tests can run it outside GitHub (tests/test_action.py runs the action's steps
with the environment variables a runner sets, against a temporary git
repository, with a recording fake `gh` on PATH).

Steps:

* `install`: a virtual environment in $RUNNER_TEMP with dagward installed from
  the action's own checkout ($GITHUB_ACTION_PATH), put on $GITHUB_PATH;
* `check`: `dagward check` twice, SARIF to a file (for code scanning) and
  workflow commands (annotations); records the exit status as a step output
  instead of failing, so the later steps still run;
* `comment`: on a pull request, the Markdown `dagward diff` against the base
  commit, posted as ONE comment of this action's own, found again by a hidden
  marker at the start of its body and edited in place on the next run;
* `finish`: exits with the status `check` recorded.

Only the standard library: this runs before (and apart from) dagward's install.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import venv
from pathlib import Path

MARKER_PREFIX = "<!-- dagward-pr-comment:"
# GitHub refuses comment bodies over 65,536 characters.
MAX_BODY = 65_000


def _say(kind: str, message: str) -> None:
    """A workflow command (`::error::`, `::warning::`, `::notice::`): an annotation."""
    print(f"::{kind}::{message}", flush=True)


def _set_output(name: str, value: str) -> None:
    path = os.environ.get("GITHUB_OUTPUT")
    if path:
        with open(path, "a", encoding="utf-8") as handle:
            handle.write(f"{name}={value}\n")


def _input(name: str, default: str = "") -> str:
    return os.environ.get(f"DAGWARD_{name.upper().replace('-', '_')}", default).strip()


def _paths() -> list[str]:
    """`paths` is space- or newline-separated (a YAML block list reads naturally)."""
    return _input("paths", ".").split() or ["."]


# --- install ------------------------------------------------------------------------


def install() -> int:
    action = Path(os.environ["GITHUB_ACTION_PATH"])
    target = Path(os.environ.get("RUNNER_TEMP") or tempfile.gettempdir()) / "dagward-venv"
    venv.EnvBuilder(with_pip=True, clear=True).create(target)
    python = target / ("Scripts" if os.name == "nt" else "bin") / "python"
    spec = str(action)
    if _input("data"):
        spec += "[data]"  # numpy, scipy, pandas for testing against data
    done = subprocess.run(
        [str(python), "-m", "pip", "install", "--quiet", "--disable-pip-version-check", spec],
        check=False,
    )
    if done.returncode != 0:
        _say(
            "error", f"installing dagward from {action} failed (pip exit status {done.returncode})"
        )
        return done.returncode
    bin_dir = python.parent
    with open(os.environ["GITHUB_PATH"], "a", encoding="utf-8") as handle:
        handle.write(f"{bin_dir}\n")
    return 0


# --- check --------------------------------------------------------------------------


def check() -> int:
    """Run `dagward check`; never fails the step (the status goes to `finish`)."""
    try:
        return _check()
    except FileNotFoundError:
        _say("error", "dagward is not on PATH: did the install step fail?")
        _set_output("status", "2")
        _set_output("sarif-file", "")
        return 0


def _check() -> int:
    common = ["--fail-on", _input("fail-on", "error")]
    if _input("data"):
        common += ["--data", _input("data")]
    sarif = Path(os.environ.get("RUNNER_TEMP") or tempfile.gettempdir()) / "dagward.sarif"
    if sarif.exists():
        sarif.unlink()
    # the rule help links of the SARIF log point at the repository the action runs
    # from (it holds docs/rules.md); GitHub names it in these variables
    env = dict(os.environ)
    action_repo = os.environ.get("GITHUB_ACTION_REPOSITORY") or os.environ.get("GITHUB_REPOSITORY")
    if action_repo and "DAGWARD_PROJECT_URL" not in env:
        server = os.environ.get("GITHUB_SERVER_URL", "https://github.com")
        env["DAGWARD_PROJECT_URL"] = f"{server}/{action_repo}"
    subprocess.run(
        ["dagward", "check", *_paths(), *common, "--format", "sarif", "--output", str(sarif)],
        check=False,
        env=env,
    )
    # the annotations, and the status that decides the job
    status = subprocess.run(
        ["dagward", "check", *_paths(), *common, "--format", "github"], check=False
    ).returncode
    _set_output("status", str(status))
    _set_output("sarif-file", str(sarif) if sarif.is_file() else "")
    if status == 2:
        _say("error", "dagward could not check the diagrams (see the message above)")
    return 0


# --- comment ------------------------------------------------------------------------


def marker() -> str:
    return f"{MARKER_PREFIX}{_input('comment-key', 'dagward') or 'dagward'} -->"


def _git(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run(["git", *args], capture_output=True, text=True, check=False)


def _gh(*args: str, body: dict | None = None) -> subprocess.CompletedProcess:
    """`gh api` (on every GitHub-hosted runner; it reads GH_TOKEN)."""
    command = ["gh", "api", *args]
    with tempfile.TemporaryDirectory() as tmp:
        if body is not None:
            payload = Path(tmp) / "body.json"
            payload.write_text(json.dumps(body), encoding="utf-8")
            command += ["--input", str(payload)]
        return subprocess.run(command, capture_output=True, text=True, check=False)


def find_own_comment(repo: str, number: int, mark: str) -> int | None:
    """The id of this action's comment on the pull request, or None.

    A comment is ours when its body starts with the marker: a person quoting it
    or another bot writing about it does not start with our HTML comment.
    """
    page = 1
    while True:
        done = _gh(f"repos/{repo}/issues/{number}/comments?per_page=100&page={page}")
        if done.returncode != 0:
            raise RuntimeError(f"listing the comments failed: {done.stderr.strip()}")
        comments = json.loads(done.stdout or "[]")
        for c in comments:
            if str(c.get("body", "")).startswith(mark):
                return int(c["id"])
        if len(comments) < 100:
            return None
        page += 1


def comment_body(mark: str, markdown: str, status: str) -> str:
    lines = [mark, markdown.rstrip("\n"), ""]
    if status == "1":
        lines.append(
            "**`dagward check` found problems in the diagrams**: see the annotations "
            "on the changed files (and Code scanning when SARIF is uploaded)."
        )
    elif status not in ("0", ""):
        lines.append("**`dagward check` could not run**: see the job's log.")
    body = "\n".join(lines) + "\n"
    if len(body) > MAX_BODY:
        body = body[:MAX_BODY] + "\n\n(cut: the full report is `dagward diff` in the job's log)\n"
    return body


def comment() -> int:
    """Post or update this action's comment; a failure here is a warning, not a
    failed job (a pull request from a fork gets a read-only token)."""
    try:
        return _comment()
    except (RuntimeError, OSError, ValueError, KeyError) as e:
        # ValueError: gh printed no JSON; KeyError: an event without the usual fields
        _say("warning", f"dagward did not comment on the pull request: {e!s}")
        return 0


def _comment() -> int:
    event = json.loads(Path(os.environ["GITHUB_EVENT_PATH"]).read_text(encoding="utf-8"))
    pull = event.get("pull_request")
    if not pull:
        print("not a pull request: no comment")
        return 0
    number = int(pull["number"])
    base = pull["base"]["sha"]
    repo = os.environ["GITHUB_REPOSITORY"]
    if _git("cat-file", "-e", f"{base}^{{commit}}").returncode != 0:
        # a shallow checkout: fetch the base commit alone
        fetched = _git("fetch", "--no-tags", "--depth=1", "origin", base)
        if fetched.returncode != 0:
            raise RuntimeError(f"the base commit {base[:12]} could not be fetched")
    diff = subprocess.run(
        ["dagward", "diff", "--format", "markdown", "--base", base, *_paths()],
        capture_output=True,
        text=True,
        check=False,
    )
    if diff.returncode != 0:
        sys.stderr.write(diff.stderr)
        raise RuntimeError(f"`dagward diff` failed: {diff.stderr.strip()}")
    sys.stdout.write(diff.stdout)
    mark = marker()
    body = comment_body(mark, diff.stdout, os.environ.get("DAGWARD_CHECK_STATUS", ""))
    existing = find_own_comment(repo, number, mark)
    if existing is None:
        done = _gh(
            "--method", "POST", f"repos/{repo}/issues/{number}/comments", body={"body": body}
        )
        verb = "posted"
    else:
        done = _gh("--method", "PATCH", f"repos/{repo}/issues/comments/{existing}",
                   body={"body": body})  # fmt: skip
        verb = "updated"
    if done.returncode != 0:
        raise RuntimeError(f"gh api failed: {done.stderr.strip()}")
    print(f"dagward: {verb} the pull request comment")
    return 0


# --- finish -------------------------------------------------------------------------


def finish() -> int:
    status = os.environ.get("DAGWARD_CHECK_STATUS", "")
    if status == "":
        _say("error", "dagward check did not run")
        return 2
    if status != "0":
        print(f"dagward check exited with status {status}")
    return int(status)


STEPS = {"install": install, "check": check, "comment": comment, "finish": finish}

if __name__ == "__main__":
    if len(sys.argv) != 2 or sys.argv[1] not in STEPS:
        sys.stderr.write(f"usage: run.py {{{'|'.join(STEPS)}}}\n")
        raise SystemExit(2)
    raise SystemExit(STEPS[sys.argv[1]]())
