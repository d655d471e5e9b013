"""The ``statepath`` command line: solve, check, diff, new, components, open.

Every command reads files through ``thermo.sheetfile`` and solves through
``thermo.flowsheet``, the same code the app uses. Results go to stdout;
problems go to stderr as ``statepath: FILE:LINE: key.path: what. Fix: how.``
Exit codes follow the flowsheet contract (0 ok, 1 violations, 2 could not be
read or solved); ``main`` never lets a traceback reach the user.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from importlib import metadata, resources
from pathlib import Path
from typing import Callable, Sequence, TextIO

EXIT_OK = 0
EXIT_VIOLATIONS = 1
EXIT_ERROR = 2
EXIT_INTERRUPTED = 130
EXIT_CHANGED = 1  # statepath diff, as diff(1)
EXIT_NO_MATCH = 1  # statepath components FILTER, as grep(1)

PROG = "statepath"
COMMANDS = ("solve", "check", "diff", "new", "components", "open")
DEFAULT_UNITS = "metric"
UNITS_ENV = "STATEPATH_UNITS"
DEBUG_ENV = "STATEPATH_DEBUG"


class CommandError(Exception):
    """A failure the user can mend: printed as one ``statepath: ...`` line, exit 2."""

    def __init__(self, message: str, fix: str | None = None):
        self.message = message
        self.fix = fix
        super().__init__(message)

    def line(self) -> str:
        text = _sentence(self.message)
        return text + (f" Fix: {_sentence(self.fix)}" if self.fix else "")


def _sentence(text: str) -> str:
    text = text.rstrip()
    return text if text.endswith((".", "?", "!")) else text + "."


# ------------------------------------------------------------------ output helpers


def _say_error(line: str, stderr: TextIO) -> None:
    print(f"{PROG}: {line}", file=stderr)


def _console(stream: TextIO):
    from rich.console import Console

    # highlight=False: Rich would colour numbers and words by guesswork.
    return Console(file=stream, highlight=False, soft_wrap=False)


def _unit_system(choice: str) -> str:
    from tui.render import UNIT_SYSTEM_CHOICES

    return UNIT_SYSTEM_CHOICES[choice]


def _default_units() -> str:
    value = os.environ.get(UNITS_ENV, DEFAULT_UNITS).strip().lower()
    return value if value in ("si", "metric", "us") else DEFAULT_UNITS


def _version() -> str:
    try:
        return metadata.version("statepath")
    except metadata.PackageNotFoundError:
        return "unknown (not installed)"


# ------------------------------------------------------------------ loading


def _solve_error_lines(result) -> list[str]:
    """``FILE:LINE: key.path: message`` for each error of a result."""
    lines = []
    for error in result.errors:
        location = error.file or "<flowsheet>"
        if error.line is not None:
            location += f":{error.line}"
        parts = [location]
        if error.where:
            parts.append(error.where)
        lines.append(": ".join(parts) + ": " + _sentence(error.message))
    return lines


def _problem_lines(error) -> list[str]:
    return [problem.describe(error.path) for problem in error.problems]


def _read_and_solve(read: Callable[[], object]):
    """(loaded, result, error lines) for a sheet that ``read()`` returns as a
    LoadedSheet (or refuses with a SheetError); the error lines are empty when
    the sheet solved, with or without violations."""
    from thermo.errors import SheetError
    from thermo.flowsheet import error_result, sheet_error_to_solve_errors, solve_sheet

    try:
        loaded = read()
    except SheetError as error:
        return None, error_result(sheet_error_to_solve_errors(error)), _problem_lines(error)
    result = solve_sheet(loaded.sheet)
    return loaded, result, _solve_error_lines(result)


def _load_and_solve(path: str):
    """``_read_and_solve`` for a file on disk."""
    from thermo.sheetfile import load_sheet

    return _read_and_solve(lambda: load_sheet(path))


def _exit_code_of(result) -> int:
    from thermo.results import STATUS_ERROR, STATUS_OK, STATUS_VIOLATIONS

    return {STATUS_OK: EXIT_OK, STATUS_VIOLATIONS: EXIT_VIOLATIONS, STATUS_ERROR: EXIT_ERROR}.get(
        result.status, EXIT_ERROR
    )


# ------------------------------------------------------------------ solve


def cmd_solve(args, stdout: TextIO, stderr: TextIO) -> int:
    from thermo.report import result_to_json_dict
    from tui import render

    loaded, result, error_lines = _load_and_solve(args.file)
    for line in error_lines:
        _say_error(line, stderr)
    code = _exit_code_of(result)
    if code == EXIT_ERROR and not error_lines:
        _say_error(f"{args.file}: the flowsheet could not be solved.", stderr)
    system = _unit_system(args.units)
    title = loaded.sheet.title if loaded is not None else None
    if args.format == "json":
        json.dump(result_to_json_dict(result), stdout, indent=2, allow_nan=False)
        stdout.write("\n")
    elif code == EXIT_ERROR and loaded is None:
        pass  # nothing was read: the messages on stderr are the whole answer
    elif args.format == "csv":
        stdout.write(render.render_csv(result, system))
    elif args.format == "markdown":
        stdout.write(render.render_markdown(result, system, title=title))
    else:
        render.print_report(result, system, _console(stdout), title=title)
    return code


# ------------------------------------------------------------------ check


def check_file(path: str, strict: bool) -> tuple[int, str, list[str]]:
    """(exit code, summary line, detail lines for stderr) for one file."""
    from tui.render import collect_flags, count_flags, level_label, plural

    loaded, result, error_lines = _load_and_solve(path)
    if loaded is None or error_lines or _exit_code_of(result) == EXIT_ERROR:
        count = len(error_lines) or 1
        return EXIT_ERROR, f"{path}: error ({plural(count, 'problem')})", error_lines
    violations, cautions = count_flags(result)
    counts = f"{plural(violations, 'violation')}, {plural(cautions, 'caution')}"
    code = _exit_code_of(result)
    details = []
    for flag in collect_flags(result):
        if flag.level == "violation" or strict:
            details.append(f"{path}: {flag.where}: {level_label(flag.level)} [{flag.code}]: {_sentence(flag.message)}")
    if code == EXIT_VIOLATIONS or violations:
        return EXIT_VIOLATIONS, f"{path}: violations ({counts})", details
    if strict and cautions:
        return EXIT_VIOLATIONS, f"{path}: cautions ({counts}; --strict)", details
    return EXIT_OK, f"{path}: ok ({counts})", details


def cmd_check(args, stdout: TextIO, stderr: TextIO) -> int:
    worst = EXIT_OK
    for path in args.files:
        code, summary, details = check_file(path, args.strict)
        print(summary, file=stdout)
        stdout.flush()
        for line in details:
            _say_error(line, stderr)
        worst = max(worst, code)
    return worst


# ------------------------------------------------------------------ diff


def _load_version_bytes(data: bytes, label: str):
    """``_read_and_solve`` for a version held in memory, named ``label`` in messages."""
    from thermo.sheetfile import parse_sheet_bytes

    return _read_and_solve(lambda: parse_sheet_bytes(data, path=label))


def cmd_diff(args, stdout: TextIO, stderr: TextIO) -> int:
    from tui import diffing

    if args.rev is not None:
        if args.new is not None:
            raise CommandError("give one FILE with --rev, or two files OLD NEW without it",
                               "statepath diff FILE --rev HEAD, or statepath diff OLD NEW")
        new_path = args.old
        _require_file(new_path)
        try:
            old_bytes, old_label = diffing.old_version_from_git(new_path, args.rev)
        except diffing.RevisionError as error:
            raise CommandError(f"{new_path}: {error.message}", error.fix) from None
    else:
        if args.new is None:
            raise CommandError("diff needs two files (OLD NEW), or one FILE and --rev REV",
                               "statepath diff old.toml new.toml, or statepath diff FILE --rev HEAD")
        _require_file(args.old)
        new_path = args.new
        _require_file(new_path)
        old_bytes, old_label = _read_bytes(args.old), args.old

    old_loaded, old_result, old_errors = _load_version_bytes(old_bytes, old_label)
    new_loaded, new_result, new_errors = _load_version_bytes(_read_bytes(new_path), new_path)
    if old_errors or new_errors:
        for line in old_errors + new_errors:
            _say_error(line, stderr)
        which = " and ".join(
            label for label, lines in ((f"the old version ({old_label})", old_errors),
                                       (f"the new version ({new_path})", new_errors)) if lines
        )
        _say_error(f"cannot compare: {which} could not be read or solved. Fix: mend the problems above.", stderr)
        return EXIT_ERROR

    result = diffing.diff_versions(old_loaded.sheet, old_result, new_loaded.sheet, new_result)
    system = _unit_system(args.units)
    print(f"--- {old_label}", file=stdout)
    print(f"+++ {new_path}", file=stdout)
    if not result.changed:
        print("No changes: same inputs, same results.", file=stdout)
        return EXIT_OK
    for section, heading in diffing.SECTIONS:
        changes = result.section(section)
        if not changes:
            continue
        print(f"{heading}:", file=stdout)
        for change in changes:
            print(f"  {diffing.action_mark(change.action):<9} {change.describe(system)}", file=stdout)
    return EXIT_CHANGED


def _read_bytes(path: str) -> bytes:
    try:
        return Path(path).read_bytes()
    except OSError as error:
        raise CommandError(f"{path}: cannot read the file: {error.strerror or error}",
                           "check the path and its permissions") from None


def _require_file(path: str) -> None:
    file_path = Path(path)
    if file_path.is_dir():
        raise CommandError(f"{path}: this is a folder, not a flowsheet file", "give the path of a .toml file")
    if not file_path.exists():
        raise CommandError(f"{path}: no such file", "check the path")


# ------------------------------------------------------------------ new


def template_text() -> str:
    """The commented starting flowsheet that ``statepath new`` writes."""
    return resources.files("tui").joinpath("templates/new-sheet.toml").read_text("utf-8")


def cmd_new(args, stdout: TextIO, stderr: TextIO) -> int:
    path = Path(args.file)
    if path.is_dir():
        raise CommandError(f"{args.file}: this is a folder", "give a file name such as my-sheet.toml")
    if path.exists() and not args.force:
        raise CommandError(f"{args.file}: the file exists already; nothing was written",
                           "choose another name, or pass --force to replace it")
    if not path.parent.is_dir():
        raise CommandError(f"{args.file}: folder {str(path.parent)!r} does not exist",
                           "create the folder first, or give another path")
    try:
        text = template_text()
    except OSError as error:
        raise CommandError(f"the template that ships with statepath cannot be read ({error})",
                           "reinstall statepath") from None
    try:
        with open(path, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
    except OSError as error:
        raise CommandError(f"{args.file}: cannot write the file: {error.strerror or error}",
                           "check the folder's permissions") from None
    print(f"Wrote {args.file} from statepath's commented template: an invented example to edit into your own.",
          file=stdout)
    print(f"Next: statepath solve {args.file}   (or statepath open {args.file})", file=stdout)
    return EXIT_OK


# ------------------------------------------------------------------ components


def cmd_components(args, stdout: TextIO, stderr: TextIO) -> int:
    from rich import box
    from rich.table import Table

    from thermo.components import library
    from thermo.quantities import display_units, format_number, to_display

    system = _unit_system(args.units)
    wanted = (args.filter or "").strip().lower()
    rows = []
    for name, component in library().items():
        names = [name, component.formula, *component.aliases]
        if wanted and not any(wanted in n.lower() for n in names if n):
            continue
        rows.append(component)
    if not rows:
        print(f"No library component matches {args.filter!r}.", file=stdout)
        print("Run `statepath components` for the full list, or define one under [components.NAME].", file=stdout)
        return EXIT_NO_MATCH
    table = Table(box=box.SIMPLE_HEAD, pad_edge=False)
    table.add_column("name")
    table.add_column("formula")
    table.add_column(f"M\n{display_units('molar_mass', system)}", justify="right")
    table.add_column(f"Tc\n{display_units('temperature', system)}", justify="right")
    table.add_column(f"Pc\n{display_units('pressure', system)}", justify="right")
    table.add_column("omega", justify="right")
    for c in rows:
        table.add_row(
            c.name,
            c.formula,
            format_number(to_display(c.molar_mass, "molar_mass", system), significant=5, max_decimals=3),
            format_number(to_display(c.critical_temperature, "temperature", system), significant=5, max_decimals=2),
            format_number(to_display(c.critical_pressure, "pressure", system), significant=5, max_decimals=2),
            format_number(c.acentric_factor, significant=3, max_decimals=4),
        )
    _console(stdout).print(table)
    print(f"{len(rows)} component{'s' if len(rows) != 1 else ''}; names and formulas both work in a "
          "composition (methane or CH4).", file=stdout)
    return EXIT_OK


# ------------------------------------------------------------------ open


def interactive_terminal() -> bool:
    """True when both stdin and stdout are a terminal (the app can run)."""
    try:
        return sys.stdin.isatty() and sys.stdout.isatty()
    except (AttributeError, ValueError):  # a closed or replaced stream
        return False


def cmd_open(args, stdout: TextIO, stderr: TextIO) -> int:
    path = args.file
    if path is not None:
        file_path = Path(path)
        if file_path.is_dir():
            raise CommandError(f"{path}: this is a folder, not a flowsheet file", "give the path of a .toml file")
        if not file_path.exists():
            raise CommandError(f"{path}: no such file", f"create one with `statepath new {path}`, then open it")
    try:
        import importlib

        app = importlib.import_module("tui.app")
    except ModuleNotFoundError as error:
        if error.name in ("tui.app", "tui"):
            raise CommandError("the interactive app (tui.app) is not part of this installation yet",
                               "use `statepath solve FILE` for a table, or update statepath") from None
        raise
    run_app = getattr(app, "run_app", None)
    if run_app is None:
        raise CommandError("the interactive app (tui.app) has no run_app entry point", "update statepath")
    if not interactive_terminal():
        raise CommandError("the interactive app needs a terminal (stdin and stdout are not one here)",
                           "run it in a terminal, or use `statepath solve FILE` for a printed table")
    outcome = run_app(path or None)
    return outcome if isinstance(outcome, int) else EXIT_OK


# ------------------------------------------------------------------ parser

_MAIN_EPILOG = """\
exit codes (solve, check):
  0  solved; cautions may be present
  1  solved with violations: a unit breaks the second law or its own
     nature, or a stream it writes crosses a [limits] value (a design
     limit); check --strict: cautions count too
  2  a file could not be read or solved (the reason is on stderr)

examples:
  statepath new station.toml          start from a commented template
  statepath solve station.toml        table of streams, units and flags
  statepath solve station.toml --json | jq .units
  statepath check flowsheets/*.toml   one line per file, for CI and git hooks
  statepath diff station.toml --rev HEAD
  statepath components methane
  statepath station.toml              open the interactive app

Units: --units si|metric|us on solve, diff and components (default metric,
or set STATEPATH_UNITS). Every value in a flowsheet file carries its unit:
"35 degC", "68 barg", "2400 kmol/h".
"""

_SOLVE_EPILOG = """\
output:
  (default)   tables: streams (T, P, flow, vapor fraction and phase, molar H
              and S), units (duty, power, entropy generation, lost work,
              flags), then each violation and caution with its code
  --json      the contract's JSON, always SI (K, Pa, mol/s, W, J/mol)
  --csv       three CSV blocks (streams, units, flags) with the unit of each
              column in its header, in the --units system
  --markdown  pipe tables for a review comment or a report

exit codes:
  0  solved; cautions may be present
  1  solved with violations: a unit breaks the second law or its nature,
     or a stream it writes crosses a [limits] value (a design limit; a
     feed past one is a caution only)
  2  the file could not be read or solved; messages on stderr read
     "statepath: FILE:LINE: key.path: what. Fix: how."

examples:
  statepath solve flowsheets/gas-letdown.toml
  statepath solve station.toml --units us
  statepath solve station.toml --json > result.json
  statepath solve station.toml --markdown >> review.md
"""

_CHECK_EPILOG = """\
One line per file on stdout, e.g.
  flowsheets/gas-letdown.toml: ok (0 violations, 1 caution)
  station.toml: violations (1 violation, 0 cautions)
  broken.toml: error (2 problems)
The reasons (each violation, each problem with its line) go to stderr.

exit code: the worst of the files:
  0  every file solved (cautions allowed, unless --strict)
  1  a file has violations (with --strict: or cautions)
  2  a file could not be read or solved

examples:
  statepath check flowsheets/*.toml
  statepath check --strict station.toml        # in a pre-commit hook
  git diff --name-only --cached -- '*.toml' | xargs -r statepath check
"""

_DIFF_EPILOG = """\
Solves both versions and lists what changed:
  Inputs   settings, feeds and units added, removed or with a new value
  Streams  temperatures, pressures and phases that moved
  Units    duties and powers that moved
  Flags    violations and cautions raised (+) or cleared (-)
Values are compared in SI, so "25 degC" rewritten as "298.15 K" is no change;
comments and key order never count.

With --rev, the old version is `git show REV:FILE` in the file's own
repository (REV: HEAD, HEAD~2, main, a tag or a commit id).

exit codes (like diff(1)):
  0  nothing changed
  1  something changed (shown on stdout)
  2  a version could not be read or solved, or git could not give the old one

examples:
  statepath diff station.toml --rev HEAD       # your uncommitted edit
  statepath diff station.toml --rev main~3
  statepath diff old/station.toml station.toml --units us
"""

_NEW_EPILOG = """\
The template is an invented gas let-down station (a heater before a valve),
commented key by key; edit it into your own and run `statepath solve FILE`.

examples:
  statepath new station.toml
  statepath new station.toml --force     # replace an existing file
"""

_COMPONENTS_EPILOG = """\
FILTER matches part of a name, formula or alias (case ignored); exit 1 when
nothing matches.

examples:
  statepath components
  statepath components butane
  statepath components CO2 --units us
"""

_OPEN_EPILOG = """\
Opens the interactive app on FILE (or on no file). `statepath FILE` does the same.

examples:
  statepath open station.toml
  statepath station.toml
"""


class _Parser(argparse.ArgumentParser):
    """argparse with statepath's error line: ``statepath: ... Fix: ...`` and exit 2."""

    def error(self, message: str):  # noqa: D401 - argparse's hook
        self.print_usage(sys.stderr)
        fix = f"see `{self.prog} --help`"
        self.exit(EXIT_ERROR, f"{PROG}: {_sentence(message)} Fix: {fix}.\n")


def _add_units(parser: argparse.ArgumentParser) -> None:
    parser.add_argument(
        "--units", choices=("si", "metric", "us"), default=_default_units(),
        help="display units: si (K, kPa, mol/s, kW), metric (degC, bara, kmol/h, kW) or "
             "us (degF, psia, lbmol/h, Btu/h); default metric or $STATEPATH_UNITS",
    )


def build_parser() -> argparse.ArgumentParser:
    """The whole command line, with examples in each command's --help."""
    raw = argparse.RawDescriptionHelpFormatter
    parser = _Parser(
        prog=PROG,
        description="Real-gas energy and entropy balances of process streams held in a TOML flowsheet.",
        epilog=_MAIN_EPILOG,
        formatter_class=raw,
    )
    parser.add_argument("--version", action="version", version=f"{PROG} {_version()}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    solve = commands.add_parser("solve", help="solve a flowsheet and print its streams, units and flags",
                                description="Solve FILE and print the result.", epilog=_SOLVE_EPILOG,
                                formatter_class=raw)
    solve.add_argument("file", metavar="FILE", help="the flowsheet (.toml)")
    formats = solve.add_mutually_exclusive_group()
    for flag, value, text in (
        ("--json", "json", "the contract's JSON, SI units"),
        ("--csv", "csv", "CSV blocks: streams, units, flags"),
        ("--markdown", "markdown", "Markdown tables"),
    ):
        formats.add_argument(flag, dest="format", action="store_const", const=value, help=text)
    solve.set_defaults(format="table")
    _add_units(solve)

    check = commands.add_parser("check", help="solve files and report ok/violations/error (for CI)",
                                description="Solve each FILE; one summary line per file; exit with the worst code.",
                                epilog=_CHECK_EPILOG, formatter_class=raw)
    check.add_argument("files", metavar="FILE", nargs="+", help="flowsheets (.toml)")
    check.add_argument("--strict", action="store_true", help="fail (exit 1) on cautions too")

    diff = commands.add_parser("diff", help="solve two versions of a flowsheet and show what changed",
                               description="Compare OLD with NEW, or FILE with its version at git revision REV.",
                               epilog=_DIFF_EPILOG, formatter_class=raw)
    diff.add_argument("old", metavar="OLD|FILE", help="the old version, or the file when --rev is given")
    diff.add_argument("new", metavar="NEW", nargs="?", help="the new version")
    diff.add_argument("--rev", metavar="REV", help="compare FILE with its version at git revision REV")
    _add_units(diff)

    new = commands.add_parser("new", help="write a commented starting flowsheet",
                              description="Write the commented template to FILE.", epilog=_NEW_EPILOG,
                              formatter_class=raw)
    new.add_argument("file", metavar="FILE", help="where to write it (.toml)")
    new.add_argument("--force", action="store_true", help="replace FILE if it exists")

    components = commands.add_parser("components", help="list the library's components",
                                     description="List library components: name, formula, molar mass, "
                                                 "critical temperature and pressure, acentric factor.",
                                     epilog=_COMPONENTS_EPILOG, formatter_class=raw)
    components.add_argument("filter", metavar="FILTER", nargs="?", help="part of a name or formula")
    _add_units(components)

    open_ = commands.add_parser("open", help="open the interactive app", description="Open the interactive app.",
                                epilog=_OPEN_EPILOG, formatter_class=raw)
    open_.add_argument("file", metavar="FILE", nargs="?", help="the flowsheet to open")
    return parser


_HANDLERS = {
    "solve": cmd_solve,
    "check": cmd_check,
    "diff": cmd_diff,
    "new": cmd_new,
    "components": cmd_components,
    "open": cmd_open,
}


def _with_open_shorthand(argv: list[str]) -> list[str]:
    """``statepath FILE`` means ``statepath open FILE`` when FILE is not a command."""
    if argv and argv[0] not in COMMANDS and not argv[0].startswith("-"):
        first = argv[0]
        if first.endswith(".toml") or Path(first).exists():
            return ["open", *argv]
    return argv


def run(argv: Sequence[str] | None, stdout: TextIO, stderr: TextIO) -> int:
    """Parse ``argv`` and run the command; raises only for bugs."""
    args_list = _with_open_shorthand(list(sys.argv[1:] if argv is None else argv))
    parser = build_parser()
    try:
        args = parser.parse_args(args_list)
    except SystemExit as stop:  # --help, --version, or a usage error
        return stop.code if isinstance(stop.code, int) else (EXIT_OK if stop.code is None else EXIT_ERROR)
    if args.command is None:
        if interactive_terminal():
            args = parser.parse_args(["open"])
        else:
            parser.print_help(stderr)
            return EXIT_ERROR
    try:
        return _HANDLERS[args.command](args, stdout, stderr)
    except CommandError as error:
        _say_error(error.line(), stderr)
        return EXIT_ERROR


def internal_error(error: BaseException, stderr: TextIO) -> int:
    """The last resort: a one-line message instead of a traceback, exit 2."""
    _say_error(
        f"internal error ({type(error).__name__}: {error}). This is a bug in statepath, not in your file; "
        f"please report it with the command and the flowsheet. Set {DEBUG_ENV}=1 to see the traceback.",
        stderr,
    )
    return EXIT_ERROR


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``statepath`` console script; returns the exit code."""
    stdout, stderr = sys.stdout, sys.stderr
    try:
        return run(argv, stdout, stderr)
    except KeyboardInterrupt:
        _say_error("interrupted.", stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:
        # The reader of our output went away (`statepath solve x | head`): stop quietly.
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, stdout.fileno())
        except (OSError, ValueError, AttributeError):
            pass
        return EXIT_ERROR
    except Exception as error:  # noqa: BLE001 - the promise: never a traceback
        if os.environ.get(DEBUG_ENV):
            raise
        return internal_error(error, stderr)


if __name__ == "__main__":
    sys.exit(main())
