"""dagward covariates FILE --analysis NAME (--formula F | --list A,B): check the
covariates an analysis script actually uses against the diagram.

For R, Stata and Python users whose model lives in a script: the formula (or
list) is read into variable names (`dagward.formula`), data column names are
mapped to diagram names (`--rename COLUMN=VARIABLE`, and the
`[tool.dagward.columns]` table; the command line wins), and the set is judged
by `dagward.api.check_covariates` as if the analysis's `adjust:` line listed it.

Reading a formula: the left side must name the analysis's outcome; the
exposure's own terms are recognised (the exposure is not a covariate, also
inside an interaction such as `x:age`); every other variable named in a term
is a covariate (`log(age):treated` adjusts for `age` and `treated`).

Exit status: 0 when the set is valid (warnings may still be printed), 1 when it
is not, 2 for usage problems: an unknown name (with a suggestion), a formula
that cannot be read, an outcome or exposure that does not match the analysis.
"""

from __future__ import annotations

import argparse

from ..errors import UsageProblem
from .common import emit, settings_from, use_color

HELP = (
    "Check the covariates an analysis script uses: a model formula in Wilkinson notation "
    "(y ~ x + age + ns(bmi, 3) + factor(region)) or a plain list. Prints the verdict and "
    "that analysis's findings; exit 1 when the set is not a valid adjustment set."
)
FORMATS = ("text", "json")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", metavar="FILE", help="the diagram")
    p.add_argument("--analysis", metavar="NAME", help="the analysis (needed when there are "
                   "several)")  # fmt: skip
    source = p.add_mutually_exclusive_group(required=True)
    source.add_argument("--formula", metavar="F", help="the model formula, e.g. 'y ~ x + age'")
    source.add_argument("--list", metavar="A,B", help="the covariates, comma-separated "
                        "(the exposure and outcome left out)")  # fmt: skip
    p.add_argument("--rename", metavar="COLUMN=VARIABLE", action="append", default=[],
                   help="a data column whose diagram name differs (repeatable, or "
                   "comma-separated)")  # fmt: skip


def parse_renames(values: list[str]) -> dict[str, str]:
    out: dict[str, str] = {}
    for raw in values:
        for item in (x.strip() for x in raw.split(",")):
            if not item:
                continue
            column, sep, variable = item.partition("=")
            if not sep or not column.strip() or not variable.strip():
                raise UsageProblem(f"--rename wants COLUMN=VARIABLE, not `{item}`")
            out[column.strip()] = variable.strip()
    return out


def _unknown(names: list[str], known: list[str], file: str) -> UsageProblem:
    from ..wording import did_you_mean

    parts = []
    for n in names:
        hint = did_you_mean(n, known).removeprefix("; ")
        parts.append(f"`{n}`" + (f" ({hint})" if hint else ""))
    listed = ", ".join(parts)
    noun = "is not a variable" if len(names) == 1 else "are not variables"
    return UsageProblem(
        f"{listed} {noun} of {file}; if a data column is named differently from the "
        "diagram, map it with --rename COLUMN=VARIABLE or [tool.dagward.columns]"
    )


def run(args: argparse.Namespace) -> int:
    from ..api import VALIDITY_RULES, check_covariates, load_diagram
    from ..engine import FileResult
    from ..errors import DiagramHasErrors
    from ..findings import DiagramError
    from ..formula import FormulaVariables, parse_formula

    settings = settings_from(args)
    renames = {**settings.columns, **parse_renames(args.rename)}
    try:
        checked = load_diagram(args.file, settings)
    except FileNotFoundError:
        raise UsageProblem(f"no such file: {args.file}") from None
    except DiagramError as e:
        raise DiagramHasErrors(FileResult(args.file, e.findings)) from None
    diagram = checked.diagram
    analyses = diagram.analyses
    if args.analysis is None:
        if len(analyses) != 1:
            names = ", ".join(a.name for a in analyses) or "none"
            raise UsageProblem(f"{args.file} has {len(analyses)} analyses; name one with "
                               f"--analysis (it has: {names})")  # fmt: skip
        analysis = analyses[0]
    else:
        matching = [a for a in analyses if a.name == args.analysis]
        if not matching:
            from ..wording import did_you_mean

            names = [a.name for a in analyses]
            raise UsageProblem(
                f"{args.file} has no analysis `{args.analysis}`"
                f"{did_you_mean(args.analysis, names)} (it has: {', '.join(names) or 'none'})"
            )
        analysis = matching[0]

    if args.formula is not None:
        parsed = parse_formula(args.formula)
    else:
        parsed = FormulaVariables.from_names([n.strip() for n in args.list.split(",") if n.strip()])

    def to_diagram(name: str) -> str:
        return renames.get(name, name)

    known = list(diagram.variables)
    used = list(dict.fromkeys([*parsed.outcome, *parsed.variables]))
    unknown = [n for n in used if to_diagram(n) not in diagram.variables]
    if unknown:
        raise _unknown(unknown, known, args.file)
    exposure, outcome = analysis.exposure_set, analysis.outcome_set
    outcome_named = [to_diagram(n) for n in parsed.outcome]
    if parsed.outcome and not set(outcome_named) & outcome:
        raise UsageProblem(
            f"the formula's left side names {_names(outcome_named)}, but the outcome of "
            f"analysis `{analysis.name}` is {_names(sorted(outcome))}"
        )
    right = [to_diagram(n) for n in parsed.variables]
    if args.formula is not None and not set(right) & exposure:
        raise UsageProblem(
            f"the formula's right side does not name the exposure {_names(sorted(exposure))} "
            f"of analysis `{analysis.name}`"
        )
    on_outcome_side = [n for n in right if n in outcome]
    if on_outcome_side:
        raise UsageProblem(f"the outcome {_names(on_outcome_side)} is on the right side "
                           "(among the covariates)")  # fmt: skip
    covariates = [n for n in dict.fromkeys(right) if n not in exposure]
    exposure_terms = [t for t in parsed.terms if any(to_diagram(n) in exposure for n in t)]

    findings = check_covariates(args.file, analysis.name, covariates, settings)
    # this analysis only, whatever else the file holds
    findings = [f for f in findings if f.analysis == analysis.name]
    valid = not any(f.rule in VALIDITY_RULES for f in findings)
    mapped = {c: v for c, v in renames.items() if c in used and c != v}
    if args.format == "json":
        emit(args, _json(args, analysis, covariates, exposure_terms, mapped, valid, findings))
    else:
        emit(args, _text(args, analysis, covariates, mapped, valid, findings))
    return 0 if valid else 1


def _names(names: list[str]) -> str:
    from ..wording import backticked

    return backticked(names) if names else "nothing"


def _text(args, analysis, covariates, mapped, valid, findings) -> str:
    from ..report import Report, reporter

    shown = ", ".join(covariates) if covariates else "none"
    lines = [f"analysis `{analysis.name}` in {args.file}: covariates {shown}"]
    if mapped:
        lines.append("data columns read as diagram variables: "
                     + ", ".join(f"{c} = {v}" for c, v in sorted(mapped.items())))  # fmt: skip
    if valid:
        verdict = "valid adjustment set (according to the diagram)"
    else:
        verdict = "not a valid adjustment set (according to the diagram); see below"
    lines.append(f"verdict: {verdict}")
    text = "\n".join(lines) + "\n"
    if findings:
        body = reporter("text")(Report(findings, 1, color=use_color(args), quiet=args.quiet))
        text += body
    elif not args.quiet:
        text += "no findings\n"
    return text


def _json(args, analysis, covariates, exposure_terms, mapped, valid, findings) -> str:
    import json

    from ..report.json_report import SCHEMA_VERSION, tool

    doc = {
        "tool": tool(),
        "schema": SCHEMA_VERSION,
        "file": args.file,
        "analysis": analysis.name,
        "exposure": sorted(analysis.exposure_set),
        "outcome": sorted(analysis.outcome_set),
        "covariates": covariates,
        "exposure_terms": [list(t) for t in exposure_terms],
        "renamed": mapped,
        "valid": valid,
        "findings": [f.to_dict() for f in findings],
    }
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
