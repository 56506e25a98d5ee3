"""`[tool.dagward]` settings: found, read and strictly validated.

Settings come from `--config FILE` (a TOML file with a `[tool.dagward]` table),
or, for each checked file, from the nearest `pyproject.toml` *with a
`[tool.dagward]` table* found walking up from that file's directory (a
pyproject without the table is passed over, so a package's own pyproject.toml
does not hide the study's settings above it). `--no-config` uses the defaults.
`SettingsFinder` does the per-file lookup, once per directory.
Unknown keys, unknown rule names and bad values are errors that name the key and
the file; the command line then exits with status 2.
"""

from __future__ import annotations

import os
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path

from .errors import UsageProblem
from .findings import SEVERITIES, Severity

KEYS = ("include", "exclude", "enable", "disable", "fail-on", "severity", "columns", "data")
# [tool.dagward.data]: how data files are read (see dagward.data.reading_options)
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
    # data column name -> diagram variable, where the analysis code's names differ
    # (`[tool.dagward.columns]`; used by `dagward covariates`)
    columns: dict[str, str] = field(default_factory=dict)
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
    """The nearest `pyproject.toml` with a `[tool.dagward]` table, from `start` upwards."""
    for directory in (start, *start.parents):
        candidate = directory / "pyproject.toml"
        if candidate.is_file() and _has_table(candidate):
            return candidate
    return None


def _has_table(pyproject: Path) -> bool:
    return _read(pyproject).get("tool", {}).get("dagward") is not None


def load_settings(
    config: str | None = None, cwd: Path | None = None, *, no_config: bool = False
) -> Settings:
    """Settings from `config`, else from the nearest `[tool.dagward]` above `cwd`."""
    cwd = cwd or Path.cwd()
    if no_config:
        return Settings(root=cwd)
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
        # No settings file: patterns are read relative to the current directory.
        return Settings(root=cwd)
    table = _read(pyproject)["tool"]["dagward"]
    return from_table(table, str(pyproject), pyproject.resolve().parent)


class SettingsFinder:
    """The settings that apply to each checked file (see the module docstring).

    With `--config` or `--no-config` every file gets the same settings; otherwise
    each file gets those of the nearest `[tool.dagward]` above it. Command-line
    `--enable`/`--disable`/`--fail-on` are applied on top in every case.
    """

    def __init__(
        self,
        config: str | None = None,
        no_config: bool = False,
        enable: list[str] | None = None,
        disable: list[str] | None = None,
        fail_on: str | None = None,
    ) -> None:
        self._overrides = (enable or [], disable or [], fail_on)
        self._fixed: Settings | None = None
        if config is not None or no_config:
            self._fixed = self._override(load_settings(config, no_config=no_config))
        self._by_directory: dict[str, Path | None] = {}
        self._by_source: dict[Path | None, Settings] = {}

    def _override(self, settings: Settings) -> Settings:
        return settings.with_overrides(*self._overrides)

    def for_directory(self, directory: str | Path) -> Settings:
        if self._fixed is not None:
            return self._fixed
        key = os.path.abspath(directory)
        if key not in self._by_directory:
            self._by_directory[key] = self._lookup(Path(key))
        source = self._by_directory[key]
        if source not in self._by_source:
            if source is None:
                self._by_source[source] = self._override(Settings(root=Path.cwd()))
            else:
                table = _read(source)["tool"]["dagward"]
                settings = from_table(table, str(source), source.resolve().parent)
                self._by_source[source] = self._override(settings)
        return self._by_source[source]

    def _lookup(self, directory: Path) -> Path | None:
        # Walk up, reusing what earlier lookups learnt about the directories above.
        seen: list[str] = []
        found: Path | None = None
        for d in (directory, *directory.parents):
            key = str(d)
            if key in self._by_directory:
                found = self._by_directory[key]
                break
            seen.append(key)
            candidate = d / "pyproject.toml"
            if candidate.is_file() and _has_table(candidate):
                found = candidate
                break
        for key in seen:
            self._by_directory.setdefault(key, found)
        return found

    def for_file(self, file: str | Path) -> Settings:
        """The settings for `file` (a path as given; `-` is stdin, looked up from cwd)."""
        return self.for_directory(os.path.dirname(os.path.abspath(file)))

    def sources(self) -> list[Settings]:
        """Every distinct settings object handed out so far."""
        if self._fixed is not None:
            return [self._fixed]
        return list(self._by_source.values())


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
    columns = table.get("columns", {})
    if not isinstance(columns, dict) or not all(
        isinstance(k, str) and isinstance(v, str) and k.strip() and v.strip()
        for k, v in columns.items()
    ):
        raise ConfigError(
            f'{source}: `columns` must be a table of data column = "diagram variable"'
        )
    return Settings(
        include=tuple(_strings(table, "include", source, ["**/*.dag"])),
        exclude=tuple(_strings(table, "exclude", source, [])),
        enable=frozenset(_validate_rules(_strings(table, "enable", source, []), "enable", source)),
        disable=frozenset(
            _validate_rules(_strings(table, "disable", source, []), "disable", source)
        ),
        fail_on=_severity(table.get("fail-on", "error"), "fail-on", source),
        severity=checked_severity,
        columns={k.strip(): v.strip() for k, v in columns.items()},
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
    from .wording import did_you_mean as suggestion

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
