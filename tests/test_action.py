"""The GitHub Action (`action.yml`), run outside GitHub as far as this machine allows.

`run_action` reads action.yml and runs its steps the way a runner does: each
`run:` step with bash and the environment variables GitHub sets
(GITHUB_EVENT_NAME, GITHUB_EVENT_PATH, GITHUB_BASE_REF, GITHUB_REPOSITORY,
GITHUB_OUTPUT, GITHUB_PATH, RUNNER_TEMP, ...), its `${{ }}` expressions and
`if:` conditions evaluated (an `if:` without `always()` also needs every earlier
step to have succeeded, GitHub's implicit `success()`), step outputs read back
from $GITHUB_OUTPUT. `uses:` steps (setup-python, the SARIF upload) cannot run
here; they are recorded with their evaluated inputs. The GitHub API is a fake
`gh` on PATH that keeps the pull request's comments in a file and records every
call, so the tests see what the action asked for.

The expression rules follow GitHub's documented workflow syntax ("Expressions",
"Metadata syntax for GitHub Actions"), from the documentation.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest
import yaml

CHECKOUT = Path(__file__).resolve().parents[1]
ACTION = CHECKOUT / "action.yml"
SCHEMA = CHECKOUT / "tests" / "schemas" / "github-action" / "github-action.schema.json"

GOOD = """\
title "Cycle lanes and commuter injuries"
traffic_volume -> cycle_lane, injuries  # busy roads get lanes first, and more crashes
cycle_lane -> cycling_rate -> injuries
cycle_lane -> injuries

analysis lane_effect {
  exposure: cycle_lane
  outcome: injuries
  adjust: traffic_volume
}
"""
# the change under review: a collider enters the adjustment set
BAD = GOOD.replace(
    "cycle_lane -> injuries\n",
    "cycle_lane -> injuries\ncycle_lane -> news_coverage  # new lanes make the news\n"
    "injuries -> news_coverage  # so do crashes\n",
).replace("adjust: traffic_volume", "adjust: traffic_volume, news_coverage")


# --- the metadata file --------------------------------------------------------------


def _action() -> dict:
    return yaml.safe_load(ACTION.read_text("utf-8"))


def test_action_metadata_validates_against_the_published_schema():
    schema = json.loads(SCHEMA.read_text("utf-8"))
    jsonschema.Draft7Validator.check_schema(schema)
    jsonschema.Draft7Validator(schema).validate(_action())
    # the schema is not a pushover: a composite step with `run` but no `shell` fails
    broken = _action()
    del broken["runs"]["steps"][1]["shell"]
    assert list(jsonschema.Draft7Validator(schema).iter_errors(broken))


def test_action_metadata_structure_from_githubs_documented_syntax():
    action = _action()
    assert isinstance(action["name"], str) and action["name"]
    assert isinstance(action["description"], str) and action["description"]
    for name, spec in action["inputs"].items():
        assert re.fullmatch(r"[a-z][a-z0-9-]*", name), name  # lowercase ids are advised
        assert set(spec) <= {"description", "required", "default", "deprecationMessage"}
        assert spec["description"], name
        assert isinstance(spec["required"], bool), name
        assert isinstance(spec.get("default", ""), str), name  # inputs are strings
    for name, spec in action["outputs"].items():  # composite outputs need a value
        assert spec["description"] and spec["value"].startswith("${{"), name
    runs = action["runs"]
    assert runs["using"] == "composite"
    ids = [s["id"] for s in runs["steps"] if "id" in s]
    assert len(ids) == len(set(ids))
    for step in runs["steps"]:
        assert ("run" in step) != ("uses" in step), step
        if "run" in step:
            assert step["shell"] == "bash", step  # composite run steps must name a shell
        # every steps.X the file refers to is a step with that id
        for ref in re.findall(r"steps\.([\w-]+)\.", json.dumps(step)):
            assert ref in ids, ref
    used = {s["uses"].split("@")[0] for s in runs["steps"] if "uses" in s}
    assert used == {"actions/setup-python", "github/codeql-action/upload-sarif"}
    # the comment and the SARIF upload must run when the check failed
    steps = {s["name"]: s for s in runs["steps"]}
    assert steps["Comment on the pull request"]["if"].startswith("always()")
    assert steps["Upload the findings to code scanning"]["if"].startswith("always()")
    assert steps["Fail when the check failed"]["if"] == "always()"


# --- running the steps --------------------------------------------------------------

FAKE_GH = """\
#!{python}
# A stand-in for `gh api`: comments live in $FAKE_GH_STATE, calls go to $FAKE_GH_LOG.
import json, os, re, sys
args = sys.argv[1:]
state_path, log_path = os.environ["FAKE_GH_STATE"], os.environ["FAKE_GH_LOG"]
state = json.load(open(state_path))
method, body, path = "GET", None, None
i = 1 if args and args[0] == "api" else 0
while i < len(args):
    if args[i] == "--method":
        method = args[i + 1]; i += 2
    elif args[i] == "--input":
        body = json.load(open(args[i + 1])); i += 2
    else:
        path = args[i]; i += 1
with open(log_path, "a") as log:
    log.write(json.dumps({{"argv": args, "method": method, "path": path, "body": body,
                          "token": os.environ.get("GH_TOKEN")}}) + "\\n")
if args[:1] != ["api"] or not os.environ.get("GH_TOKEN"):
    sys.stderr.write("gh: set GH_TOKEN\\n"); sys.exit(4)
m = re.fullmatch(
    r"repos/([^/]+/[^/]+)/issues/(\\d+)/comments(?:\\?per_page=(\\d+)&page=(\\d+))?", path
)
e = re.fullmatch(r"repos/([^/]+/[^/]+)/issues/comments/(\\d+)", path)
if m and method == "GET":
    size, page = int(m.group(3) or 30), int(m.group(4) or 1)
    print(json.dumps(state["comments"][(page - 1) * size: page * size]))
elif m and method == "POST":
    state["next_id"] += 1
    state["comments"].append({{"id": state["next_id"], "body": body["body"],
                               "user": {{"login": "github-actions[bot]"}}}})
    print(json.dumps(state["comments"][-1]))
elif e and method == "PATCH":
    for c in state["comments"]:
        if c["id"] == int(e.group(2)):
            c["body"] = body["body"]
            print(json.dumps(c))
            break
    else:
        sys.stderr.write("gh: HTTP 404\\n"); sys.exit(1)
else:
    sys.stderr.write(f"gh: unexpected call {{args}}\\n"); sys.exit(1)
json.dump(state, open(state_path, "w"))
"""


class Runner:
    """Runs action.yml's steps as a runner would (see the module docstring)."""

    def __init__(self, tmp: Path, workspace: Path, event_name: str, event: dict):
        self.tmp = tmp
        self.workspace = workspace
        self.temp = tmp / "runner-temp"
        self.temp.mkdir(exist_ok=True)
        bin_dir = tmp / "fake-bin"
        bin_dir.mkdir(exist_ok=True)
        gh = bin_dir / "gh"
        gh.write_text(FAKE_GH.format(python=sys.executable), "utf-8")
        gh.chmod(0o755)
        self.state = tmp / "gh-state.json"
        if not self.state.exists():
            self.state.write_text(json.dumps({"comments": [], "next_id": 1000}), "utf-8")
        self.log = tmp / "gh-log.jsonl"
        event_path = tmp / "event.json"
        event_path.write_text(json.dumps(event), "utf-8")
        # the setup-python step would put a Python first on PATH, the install step
        # dagward: both are this test's interpreter (the install runs in its own test)
        self.path = [str(bin_dir), str(Path(sys.executable).parent)]
        self.env = {
            "HOME": os.environ.get("HOME", str(tmp)),
            "LANG": "C.UTF-8",
            "CI": "true",
            "GITHUB_ACTIONS": "true",
            "GITHUB_EVENT_NAME": event_name,
            "GITHUB_EVENT_PATH": str(event_path),
            "GITHUB_REPOSITORY": "fieldlab/cycle-study",
            "GITHUB_WORKSPACE": str(workspace),
            "GITHUB_ACTION_PATH": str(CHECKOUT),
            "RUNNER_TEMP": str(self.temp),
            "FAKE_GH_STATE": str(self.state),
            "FAKE_GH_LOG": str(self.log),
        }
        if event_name == "pull_request":
            self.env["GITHUB_BASE_REF"] = event["pull_request"]["base"]["ref"]
            self.env["GITHUB_HEAD_REF"] = event["pull_request"]["head"]["ref"]
        self.event_name = event_name
        self.uses: list[tuple[str, dict]] = []
        self.ran: list[str] = []
        self.outputs: dict[str, dict[str, str]] = {}
        self.failed = False
        self.stdout = ""

    # -- expressions -------------------------------------------------------------
    def value(self, name: str, inputs: dict) -> str:
        parts = name.split(".")
        if parts[0] == "inputs":
            return inputs[parts[1]]
        if parts[0] == "steps" and parts[2] == "outputs":
            return self.outputs.get(parts[1], {}).get(parts[3], "")
        known = {
            "github.action_path": str(CHECKOUT),
            "github.token": "fake-token-for-tests",
            "github.event_name": self.event_name,
            "runner.temp": str(self.temp),
        }
        return known[name]  # an unknown context is a KeyError: a typo in action.yml

    def evaluate(self, expression: str, inputs: dict):
        tokens = re.findall(
            r"always\(\)|&&|\|\||==|!=|\(|\)|'[^']*'|[A-Za-z_][\w.-]*|\S", expression
        )
        out = []
        for t in tokens:
            if t == "always()":
                out.append("True")
            elif t in ("&&", "||"):
                out.append(" and " if t == "&&" else " or ")
            elif t in ("==", "!=", "(", ")"):
                out.append(t)
            elif t.startswith("'"):
                out.append(repr(t[1:-1]))
            elif re.fullmatch(r"[A-Za-z_][\w.-]*", t):
                out.append(repr(self.value(t, inputs)))
            else:
                raise ValueError(f"unsupported expression token {t!r} in {expression!r}")
        return eval("".join(out), {"__builtins__": {}})  # noqa: S307 (our own tokens)

    def substitute(self, text: str, inputs: dict) -> str:
        return re.sub(
            r"\$\{\{\s*(.*?)\s*\}\}", lambda m: str(self.evaluate(m.group(1), inputs)), text
        )

    # -- steps -------------------------------------------------------------------
    def run(self, with_: dict) -> int:
        action = _action()
        inputs = {}
        for name, spec in action["inputs"].items():
            raw = with_.get(name, spec.get("default", ""))
            inputs[name] = self.substitute(str(raw), {})
        for step in action["runs"]["steps"]:
            condition = step.get("if")
            if condition is None or "always()" not in condition:
                # GitHub's implicit success(): skipped once a step has failed
                if self.failed or (condition and not self.evaluate(condition, inputs)):
                    continue
            elif not self.evaluate(condition, inputs):
                continue
            if "uses" in step:
                args = {k: self.substitute(str(v), inputs) for k, v in step.get("with", {}).items()}
                self.uses.append((step["uses"], args))
                continue
            if step.get("id") == "install":
                continue  # see __init__: this interpreter already has dagward
            self.ran.append(step["name"])
            output = self.temp / f"output-{len(self.ran)}"
            output.write_text("", "utf-8")
            path_file = self.temp / f"path-{len(self.ran)}"
            path_file.write_text("", "utf-8")
            env = dict(self.env, GITHUB_OUTPUT=str(output), GITHUB_PATH=str(path_file))
            env["PATH"] = os.pathsep.join([*self.path, "/usr/bin", "/bin"])
            for k, v in step.get("env", {}).items():
                env[k] = self.substitute(str(v), inputs)
            script = self.substitute(step["run"], inputs)
            done = subprocess.run(
                ["bash", "--noprofile", "--norc", "-e", "-o", "pipefail", "-c", script],
                cwd=self.workspace,
                env=env,
                capture_output=True,
                text=True,
                timeout=300,
            )
            self.stdout += done.stdout + done.stderr
            if "id" in step:
                self.outputs[step["id"]] = dict(
                    line.split("=", 1) for line in output.read_text("utf-8").splitlines() if line
                )
            self.path = [*path_file.read_text("utf-8").split(), *self.path]
            if done.returncode != 0:
                self.failed = True
                self.exit_code = done.returncode
        return getattr(self, "exit_code", 0)

    def gh_calls(self) -> list[dict]:
        if not self.log.exists():
            return []
        return [json.loads(line) for line in self.log.read_text("utf-8").splitlines()]

    def comments(self) -> list[dict]:
        return json.loads(self.state.read_text("utf-8"))["comments"]


def _git(repo: Path, *args: str) -> str:
    done = subprocess.run(
        ["git", "-c", "user.name=test", "-c", "user.email=test@example.invalid", *args],
        cwd=repo,
        check=True,
        capture_output=True,
        text=True,
    )
    return done.stdout.strip()


@pytest.fixture
def study(tmp_path):
    """A research repository: main has a good diagram, branch `lane-news` breaks it."""
    repo = tmp_path / "cycle-study"
    (repo / "causal").mkdir(parents=True)
    _git(repo, "init", "-q", "-b", "main")
    (repo / "causal" / "lanes.dag").write_text(GOOD, "utf-8")
    (repo / "README.md").write_text("cycle study\n", "utf-8")
    _git(repo, "add", ".")
    _git(repo, "commit", "-q", "-m", "diagram")
    base = _git(repo, "rev-parse", "HEAD")
    _git(repo, "switch", "-q", "-c", "lane-news")
    (repo / "causal" / "lanes.dag").write_text(BAD, "utf-8")
    _git(repo, "commit", "-q", "-am", "news coverage")
    return repo, base


def _pull_request_event(base: str, number: int = 7) -> dict:
    return {
        "action": "synchronize",
        "number": number,
        "pull_request": {
            "number": number,
            "base": {"ref": "main", "sha": base},
            "head": {"ref": "lane-news", "sha": "0" * 40},
        },
    }


def _seed_comments(state: Path, comments: list[dict]) -> None:
    state.write_text(json.dumps({"comments": comments, "next_id": 5000}), "utf-8")


def test_pull_request_with_a_broken_diagram_comments_once_and_fails(study, tmp_path):
    repo, base = study
    # 120 comments already on the PR (so ours is looked for past the first page),
    # among them another bot's and a person quoting an earlier dagward comment
    others = [{"id": i, "body": f"looks fine {i}", "user": {"login": "a"}} for i in range(1, 119)]
    others.append({"id": 119, "body": "<!-- other-bot -->\ncoverage 91%", "user": {"login": "b"}})
    others.append(
        {"id": 120, "body": "> <!-- dagward-pr-comment:dagward -->\nwhy?", "user": {"login": "c"}}
    )
    _seed_comments(tmp_path / "gh-state.json", others)

    runner = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    code = runner.run({"paths": "causal"})

    # the job fails because check found an error ...
    assert code == 1, runner.stdout
    assert runner.outputs["check"]["status"] == "1"
    assert "::error file=causal/lanes.dag,line=" in runner.stdout
    assert "title=collider-adjusted::" in runner.stdout
    # ... yet the SARIF upload and the comment still ran, the failure re-raised last
    assert runner.ran == [
        "Check the diagrams",
        "Comment on the pull request",
        "Fail when the check failed",
    ]
    (uses, args), *_ = [u for u in runner.uses if u[0].startswith("github/codeql-action")]
    sarif = json.loads(Path(args["sarif_file"]).read_text("utf-8"))
    results = sarif["runs"][0]["results"]
    assert any(r["ruleId"] == "collider-adjusted" for r in results)
    uri = results[0]["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
    assert uri == "causal/lanes.dag"
    assert args["category"] == "dagward"

    # one comment was added, starting with the marker, holding the Markdown diff
    calls = runner.gh_calls()
    assert all(c["token"] == "fake-token-for-tests" for c in calls)
    assert [c["method"] for c in calls] == ["GET", "GET", "POST"]
    assert calls[1]["path"].endswith("comments?per_page=100&page=2")
    comments = runner.comments()
    assert len(comments) == 121
    ours = comments[-1]
    assert ours["body"].startswith("<!-- dagward-pr-comment:dagward -->\n")
    assert "## Causal diagrams in this change" in ours["body"]
    assert "news_coverage" in ours["body"]
    assert "found problems in the diagrams" in ours["body"]
    assert comments[:120] == others  # nobody else's comment was touched

    # the next push: the same comment is edited, none added
    (repo / "causal" / "lanes.dag").write_text(GOOD, "utf-8")
    _git(repo, "commit", "-q", "-am", "back out the news")
    second = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    assert second.run({"paths": "causal"}) == 0, second.stdout
    calls = second.gh_calls()[len(calls) :]
    assert [c["method"] for c in calls] == ["GET", "GET", "PATCH"]
    assert calls[-1]["path"] == f"repos/fieldlab/cycle-study/issues/comments/{ours['id']}"
    comments = second.comments()
    assert len(comments) == 121
    assert comments[-1]["id"] == ours["id"]
    assert "found problems" not in comments[-1]["body"]
    assert "No diagram file changed." in comments[-1]["body"]


def test_comment_key_keeps_two_uses_apart_and_comment_can_be_off(study, tmp_path):
    repo, base = study
    runner = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    runner.run({"paths": "causal", "comment-key": "second-lab"})
    runner2 = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    runner2.run({"paths": "causal"})
    bodies = [c["body"].splitlines()[0] for c in runner2.comments()]
    assert bodies == [
        "<!-- dagward-pr-comment:second-lab -->",
        "<!-- dagward-pr-comment:dagward -->",
    ]
    before = len(runner2.gh_calls())
    quiet = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    assert quiet.run({"paths": "causal", "comment": "false", "sarif": "false"}) == 1
    assert len(quiet.gh_calls()) == before
    assert "Comment on the pull request" not in quiet.ran
    assert not [u for u in quiet.uses if u[0].startswith("github/codeql-action")]


def test_push_runs_check_without_comment(study, tmp_path):
    repo, _ = study
    _git(repo, "switch", "-q", "main")
    runner = Runner(tmp_path, repo, "push", {"ref": "refs/heads/main"})
    assert runner.run({}) == 0, runner.stdout
    assert runner.outputs["check"]["status"] == "0"
    assert "Comment on the pull request" not in runner.ran
    assert runner.gh_calls() == []


def test_comment_failure_is_a_warning_not_a_failed_job(study, tmp_path):
    """A pull request from a fork gets a read-only token: the API refuses."""
    repo, base = study
    _git(repo, "switch", "-q", "main")  # a clean diagram: only the comment can fail
    runner = Runner(tmp_path, repo, "pull_request", _pull_request_event(base))
    runner.env["FAKE_GH_STATE"] = str(tmp_path / "missing.json")  # every gh call fails
    assert runner.run({"paths": "causal"}) == 0, runner.stdout
    assert "::warning::dagward did not comment on the pull request" in runner.stdout


def test_usage_problem_fails_the_job_with_status_2(study, tmp_path):
    repo, base = study
    runner = Runner(tmp_path, repo, "push", {})
    assert runner.run({"fail-on": "sometimes"}) == 2
    assert "::error::dagward could not check the diagrams" in runner.stdout


@pytest.mark.slow
def test_install_step_installs_dagward_from_the_actions_checkout(tmp_path):
    """The one step the runner above skips, for real: a venv and pip (setuptools
    comes from the package index, as in tests/test_precommit.py)."""
    step = next(s for s in _action()["runs"]["steps"] if s.get("id") == "install")
    path_file = tmp_path / "github-path"
    path_file.write_text("", "utf-8")
    env = {
        "PATH": os.environ["PATH"],
        "HOME": os.environ.get("HOME", str(tmp_path)),
        "RUNNER_TEMP": str(tmp_path),
        "GITHUB_PATH": str(path_file),
        "GITHUB_ACTION_PATH": str(CHECKOUT),
        "DAGWARD_DATA": "",
        "PIP_DISABLE_PIP_VERSION_CHECK": "1",
    }
    script = step["run"].replace("python ", f"{shutil.which('python3') or sys.executable} ", 1)
    done = subprocess.run(["bash", "-e", "-c", script], env=env, capture_output=True,
                          text=True, timeout=900)  # fmt: skip
    assert done.returncode == 0, done.stdout + done.stderr
    (bin_dir,) = path_file.read_text("utf-8").split()
    version = subprocess.run([str(Path(bin_dir) / "dagward"), "--version"],
                             capture_output=True, text=True, check=True)  # fmt: skip
    assert version.stdout.startswith("dagward ")


def test_readme_workflow_uses_the_action_as_it_is():
    """The workflow the README offers for copying: valid YAML, the permissions the
    action needs, and only inputs the action has (the commented-out ones too)."""
    readme = (CHECKOUT / "README.md").read_text("utf-8")
    block = readme.split("# .github/workflows/causal-diagrams.yml\n", 1)[1].split("```", 1)[0]
    workflow = yaml.safe_load(block)
    assert workflow["permissions"] == {
        "contents": "read",
        "security-events": "write",
        "actions": "read",
        "pull-requests": "write",
    }
    (step,) = [s for s in workflow["jobs"]["dagward"]["steps"] if "dagward" in s.get("uses", "")]
    assert step["uses"] == "OWNER/dagward@COMMIT_SHA"  # README says to put a full SHA here
    inputs = set(_action()["inputs"])
    assert set(step["with"]) <= inputs
    commented = re.findall(r"^\s+# ([a-z-]+):", block, flags=re.M)
    assert commented and set(commented) <= inputs
    checkout = workflow["jobs"]["dagward"]["steps"][0]
    assert checkout["uses"].startswith("actions/checkout@")
    assert checkout["with"]["fetch-depth"] == 0


def test_missing_dagward_fails_the_job_with_one_clear_line(study, tmp_path):
    """The install step failed: the check step says so instead of a traceback."""
    repo, _ = study
    only_python = tmp_path / "only-python"
    only_python.mkdir()
    (only_python / "python").symlink_to(sys.executable)  # no `dagward` beside it
    runner = Runner(tmp_path, repo, "push", {})
    runner.path = [runner.path[0], str(only_python)]
    assert runner.run({}) == 2
    assert "::error::dagward is not on PATH: did the install step fail?" in runner.stdout
    assert "Traceback" not in runner.stdout
