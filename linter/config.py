"""`[tool.dagward]` settings: found, read and strictly validated.

Settings come from `--config FILE` (a TOML file with a `[tool.dagward]` table) or
from the first `pyproject.toml` found walking up from the current directory.
Unknown keys, unknown rule names and bad values are errors that name the key and
the file; the command line then exits with status 2.
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

from .errors import UsageProblem
from .findings import SEVERITIES, Severity

KEYS = ("include", "exclude", "enable", "disable", "fail-on", "severity", "data")
# [tool.dagward.data]: how data files are read (see linter.data.reading_options)
DATA_KEYS = ("categorical", "numeric", "sep", "decimal")


class ConfigError(UsageProblem):
    """A problem with the configuration; the message names the file and the key."""


@dataclass(frozen=True)
class Settings:
    include: tuple[str, ...] = ("**/*.dag",)
    exclude: tuple[str, ...] = ()
    enable: frozenset[str] = frozenset()
    disable: frozenset[str] = frozenset()
    fail_on: Severity = "error"
    severity: dict[str, Severity] = field(default_factory=dict)
    data: dict[str, object] = field(default_factory=dict)  # [tool.dagward.data], checked
    root: Path = field(default_factory=Path.cwd)  # include/exclude are relative to this
    source: str | None = None  # the file the settings came from

    def is_enabled(self, rule) -> bool:
        if rule.name in self.disable:
            return False
        return rule.enabled_by_default or rule.name in self.enable

    def severity_of(self, rule) -> Severity:
        return self.severity.get(rule.name, rule.severity)

    def with_overrides(
        self,
        enable: list[str] | None = None,
        disable: list[str] | None = None,
        fail_on: str | None = None,
    ) -> Settings:
        """Command-line options win over the file: --enable X undoes disable = [X]."""
        enable_set = set(_validate_rules(enable or [], "--enable", "the command line"))
        disable_set = set(_validate_rules(disable or [], "--disable", "the command line"))
        new = replace(
            self,
            enable=frozenset((self.enable - disable_set) | enable_set),
            disable=frozenset((self.disable - enable_set) | disable_set),
        )
        if fail_on is not None:
            new = replace(new, fail_on=_severity(fail_on, "--fail-on", "the command line"))
        return new


def find_pyproject(start: Path) -> Path | None:
    for directory in (start, *start.parents):
        candidate = directory / "pyproject.toml"
        if candidate.is_file():
            return candidate
    return None


def load_settings(config: str | None = None, cwd: Path | None = None) -> Settings:
    cwd = cwd or Path.cwd()
    if config is not None:
        path = Path(config)
        if not path.is_file():
            raise ConfigError(f"configuration file not found: {config}")
        table = _read(path).get("tool", {}).get("dagward")
        if table is None:
            raise ConfigError(f"{config}: no [tool.dagward] table")
        return from_table(table, str(path), path.resolve().parent)
    pyproject = find_pyproject(cwd)
    if pyproject is None:
        return Settings(root=cwd)
    table = _read(pyproject).get("tool", {}).get("dagward")
    if table is None:
        return Settings(root=cwd)
    return from_table(table, str(pyproject), pyproject.resolve().parent)


def _read(path: Path) -> dict:
    try:
        with path.open("rb") as handle:
            return tomllib.load(handle)
    except tomllib.TOMLDecodeError as e:
        raise ConfigError(f"{path}: not valid TOML: {e}") from None
    except OSError as e:
        raise ConfigError(f"{path}: cannot be read: {e.strerror}") from None


def from_table(table: dict, source: str, root: Path) -> Settings:
    if not isinstance(table, dict):
        raise ConfigError(f"{source}: [tool.dagward] must be a table")
    for key in table:
        if key not in KEYS:
            raise ConfigError(
                f"{source}: unknown key `{key}` in [tool.dagward] (known: {', '.join(KEYS)})"
            )
    severity = table.get("severity", {})
    if not isinstance(severity, dict):
        raise ConfigError(f"{source}: `severity` must be a table of rule = level")
    checked_severity = {}
    for rule, level in severity.items():
        _validate_rules([rule], "severity", source)
        checked_severity[rule] = _severity(level, f"severity.{rule}", source)
    return Settings(
        include=tuple(_strings(table, "include", source, ["**/*.dag"])),
        exclude=tuple(_strings(table, "exclude", source, [])),
        enable=frozenset(_validate_rules(_strings(table, "enable", source, []), "enable", source)),
        disable=frozenset(
            _validate_rules(_strings(table, "disable", source, []), "disable", source)
        ),
        fail_on=_severity(table.get("fail-on", "error"), "fail-on", source),
        severity=checked_severity,
        data=_data_table(table.get("data", {}), source),
        root=root,
        source=source,
    )


def _data_table(data: object, source: str) -> dict[str, object]:
    if not isinstance(data, dict):
        raise ConfigError(f"{source}: `data` must be a table ([tool.dagward.data])")
    for key in data:
        if key not in DATA_KEYS:
            raise ConfigError(f"{source}: unknown key `{key}` in [tool.dagward.data] "
                              f"(known: {', '.join(DATA_KEYS)})")  # fmt: skip
    out: dict[str, object] = {}
    for key in ("categorical", "numeric"):
        if key in data:
            out[key] = tuple(_strings(data, key, source, []))
    both = sorted(set(out.get("categorical", ())) & set(out.get("numeric", ())))
    if both:
        raise ConfigError(f"{source}: data.categorical and data.numeric both name "
                          f"{', '.join(both)}")  # fmt: skip
    if "sep" in data:
        sep = data["sep"]
        if sep not in (",", ";", "\t", "|", "tab"):
            raise ConfigError(f"{source}: `data.sep` must be one of `,` `;` `\\t` (or `tab`) "
                              f"`|`, not {sep!r}")  # fmt: skip
        out["sep"] = "\t" if sep == "tab" else sep
    if "decimal" in data:
        if data["decimal"] not in (".", ","):
            raise ConfigError(f"{source}: `data.decimal` must be `.` or `,`, "
                              f"not {data['decimal']!r}")  # fmt: skip
        out["decimal"] = data["decimal"]
    return out


def _strings(table: dict, key: str, source: str, default: list[str]) -> list[str]:
    value = table.get(key, default)
    if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
        raise ConfigError(f"{source}: `{key}` must be a list of strings")
    return value


def _severity(value: object, key: str, source: str) -> Severity:
    if value not in SEVERITIES:
        raise ConfigError(
            f"{source}: `{key}` must be one of {', '.join(SEVERITIES)}, not {value!r}"
        )
    return value  # type: ignore[return-value]


def _validate_rules(names: list[str], key: str, source: str) -> list[str]:
    from .rules import RULES_BY_NAME
    from .rules.unknown_variable import suggestion

    out = []
    for raw in names:
        for name in (n.strip() for n in raw.split(",")):
            if not name:
                continue
            if name not in RULES_BY_NAME:
                raise ConfigError(
                    f"{source}: `{key}` names an unknown rule `{name}`"
                    f"{suggestion(name, sorted(RULES_BY_NAME))}"
                )
            out.append(name)
    return out
