"""The command line: parse flags, call the library, format the result. Nothing else lives here."""

from __future__ import annotations

import os
import signal
import sys


def _report_dir(argv: list[str]) -> str:
    """The --out folder named on the command line (for the interrupt line), else the default."""
    for i, arg in enumerate(argv):
        if arg == "--out" and i + 1 < len(argv):
            return argv[i + 1]
        if arg.startswith("--out="):
            return arg.removeprefix("--out=")
    return "." if argv[:1] == ["code"] else "featureaudit-report"


def _interrupted_line(signum: int, argv: list[str], replaced: bool) -> str:
    where = _report_dir(argv)
    if replaced:
        return f"featureaudit: interrupted; the new report in {where} is complete."
    return f"featureaudit: interrupted; the earlier report in {where} is unchanged."


def _exit_at_once(signum: int, frame: object) -> None:
    """Outside a command (while the modules load, or during interpreter exit after one) say
    which report stands and leave at once, without a traceback: the new one when this
    process swapped it in, else the earlier one."""
    writer = sys.modules.get("featureaudit.writer")
    replaced = bool(getattr(writer, "swapped", None))
    print(_interrupted_line(signum, sys.argv[1:], replaced), file=sys.stderr, flush=True)
    os._exit(128 + signum)


# first, before the heavy imports below; a signal the caller ignores (nohup, `&`) stays ignored
_SIGNALS = [s for s in (signal.SIGINT, signal.SIGTERM) if signal.getsignal(s) != signal.SIG_IGN]
for _sig in _SIGNALS:
    signal.signal(_sig, _exit_at_once)

import json  # noqa: E402
from pathlib import Path  # noqa: E402
from typing import Annotated, Any  # noqa: E402

import typer  # noqa: E402
from typer.core import TyperGroup  # noqa: E402

from featureaudit._version import __version__  # noqa: E402
from featureaudit.errors import FeatureAuditError, Interrupted, SettingError  # noqa: E402
from featureaudit.findings import diff_findings, droplist, load_findings  # noqa: E402
from featureaudit.inputs import Inputs  # noqa: E402
from featureaudit.levels import Level  # noqa: E402
from featureaudit.options import declared_options  # noqa: E402
from featureaudit.settings import Settings, check_level, read_config  # noqa: E402

__all__ = ["app", "main"]


def _click_exception() -> Any:
    """The usage-error class that this typer raises: its own vendored click's (recent typer
    releases) or click's (earlier ones)."""
    import importlib

    try:
        module = importlib.import_module("typer._click.exceptions")
    except ImportError:
        module = importlib.import_module("click.exceptions")
    return module.ClickException


class _OneLineErrors(TyperGroup):
    """Print usage errors as one line on stderr (exit 2), never a usage box or a traceback."""

    def main(self, *args: Any, **kwargs: Any) -> Any:
        usage_error = _click_exception()
        kwargs["standalone_mode"] = False
        given = args[0] if args else kwargs.get("args")
        argv = list(given) if given is not None else sys.argv[1:]
        if not argv:
            print(
                "featureaudit: error: no command given; use one of "
                f"{', '.join(sorted(self.commands))}, e.g. `featureaudit scan TABLE --target "
                "COL`, or `featureaudit --help`.",
                file=sys.stderr,
            )
            sys.exit(2)
        previous = _raise_on_signals()
        try:
            _refuse_repeated_options(self, argv)
            rv = super().main(*args, **kwargs)
        except Interrupted as exc:
            from featureaudit.writer import swapped

            print(_interrupted_line(exc.signum, argv, bool(swapped)), file=sys.stderr)
            sys.exit(128 + exc.signum)
        except FeatureAuditError as exc:
            _fail(exc)
        except usage_error as exc:
            hint = " Run `featureaudit --help` for the commands and their flags."
            print(f"featureaudit: error: {exc.format_message()}{hint}", file=sys.stderr)
            sys.exit(2)
        except KeyboardInterrupt:
            print(_interrupted_line(signal.SIGINT, argv, False), file=sys.stderr)
            sys.exit(130)
        except Exception as exc:  # noqa: BLE001 — a bug: one line, no traceback, exit 3
            print(
                f"featureaudit: internal error ({type(exc).__name__}: {exc}); no report was "
                "written. Please report it with the command you ran.",
                file=sys.stderr,
            )
            sys.exit(3)
        finally:
            for sig, handler in previous.items():
                signal.signal(sig, handler)
        sys.exit(rv if isinstance(rv, int) else 0)


def _refuse_repeated_options(group: TyperGroup, argv: list[str]) -> None:
    """An option that takes one value, given twice (``--target y --target a``), is an error
    rather than the last one silently winning."""
    command = group.commands.get(argv[0]) if argv else None
    if command is None:
        return
    single = {
        opt
        for param in command.params
        if getattr(param, "param_type_name", "") == "option" and not getattr(param, "multiple", 0)
        for opt in param.opts
    }
    seen: set[str] = set()
    for token in argv[1:]:
        if token == "--":
            break
        name = token.split("=", 1)[0]
        if name in single and name in seen:
            raise SettingError(
                f"{name} was given more than once; pass it once (with the value you mean)."
            )
        seen.add(name)


def _raise_on_signals() -> dict[int, Any]:
    """From here on SIGINT and SIGTERM raise :class:`Interrupted`, so the writer can clean up."""

    def handler(signum: int, frame: object) -> None:
        raise Interrupted(signum)

    if threading_main():
        return {sig: signal.signal(sig, handler) for sig in _SIGNALS}
    return {}


def threading_main() -> bool:
    import threading

    return threading.current_thread() is threading.main_thread()


app = typer.Typer(
    cls=_OneLineErrors,
    add_completion=False,
    rich_markup_mode=None,
    pretty_exceptions_enable=False,
    no_args_is_help=True,
    context_settings={"help_option_names": ["-h", "--help"]},
    help="Audit a training table and its split for target leakage.",
)


def _show_version(value: bool) -> None:
    if value:
        print(__version__)
        raise typer.Exit(0)


@app.callback()
def _options(
    version: Annotated[
        bool,
        typer.Option(
            "--version", callback=_show_version, is_eager=True, help="Print the version and exit."
        ),
    ] = False,
) -> None:
    """Audit a training table and its split for target leakage."""


def _fail(exc: BaseException) -> None:
    print(f"featureaudit: error: {exc}", file=sys.stderr)
    sys.exit(2)


@app.command()
@declared_options
def scan(
    table: Annotated[
        Path,
        typer.Argument(
            metavar="TABLE",
            help="CSV, TSV, Parquet, Feather/Arrow file or a folder of Parquet files.",
        ),
    ],
    config: Annotated[str | None, typer.Option(help="TOML file with any of these flags.")] = None,
    *,
    flags: dict[str, Any],
) -> int:
    """Audit TABLE and write dossier.html, findings.json, droplist.txt and summary.md.

    Example: featureaudit scan loans.parquet --target late --split-column split
    --dictionary dictionary.csv --label-time decided_at --fail-at high
    """
    from featureaudit.api import audit

    inputs, settings = _inputs_and_settings(flags, config)
    from featureaudit.accepted import apply_accepted, read_accepted
    from featureaudit.history import check_folder, load_runs, store_run

    reviewed = read_accepted(inputs.accepted) if inputs.accepted else None
    history_dir = check_folder(inputs.history) if inputs.history else None
    earlier = [r.findings for r in load_runs(history_dir)] if history_dir else None
    from featureaudit.doors import command_line

    with command_line():
        result = audit(
            str(table),
            **inputs.table_inputs(),
            settings=settings,
            progress=False if inputs.quiet else None,
        )
    if reviewed is not None:
        apply_accepted(result.document, reviewed)
    out_dir = Path(inputs.out or "featureaudit-report")
    result.write(out_dir, history=earlier)
    if history_dir is not None:
        store_run(history_dir, result.findings)
    _print_outcome(result.document, out_dir)
    from featureaudit.outcome import gate_reason

    fail = check_level(inputs.fail_at, flag="--fail-at") if inputs.fail_at else None
    reason = gate_reason(result.document, fail, inputs.fail_at_impact)
    if reason:
        print(f"featureaudit: {reason}", file=sys.stderr)
        return 1
    return 0


def _inputs_and_settings(flags: dict[str, Any], config: str | None) -> tuple[Inputs, Settings]:
    """The config file's values under the flags given (flags win), checked once, here."""
    values = dict(read_config(config)) if config else {}
    names = set(Settings.names())
    if values:  # each config value is checked, also one that a flag overrides
        Inputs.from_mapping({k: v for k, v in values.items() if k not in names}, where="config")
        Settings(**{k: v for k, v in values.items() if k in names})
    values.update({k: v for k, v in flags.items() if v is not None})
    inputs = Inputs.from_mapping({k: v for k, v in values.items() if k not in names}, where="scan")
    settings = Settings(**{k: v for k, v in values.items() if k in names})
    return inputs, settings


def _print_outcome(doc: dict[str, Any], out_dir: Path) -> None:
    from featureaudit.outcome import outcome_lines

    print("\n".join(outcome_lines(doc, out_dir)))
    for warning in doc["warnings"]:
        print(f"featureaudit: warning: {warning}", file=sys.stderr)


@app.command("droplist")
def droplist_cmd(
    findings: Annotated[
        Path, typer.Argument(metavar="FINDINGS", help="findings.json written by scan.")
    ],
    at_least: Annotated[
        str, typer.Option(metavar="[critical|high|medium|low]", help="Lowest level to drop.")
    ] = "high",
    format: Annotated[str, typer.Option(metavar="[text|json]", help="Output format.")] = "text",
) -> int:
    """Print the columns to drop from a findings file, most suspect first.

    Example: featureaudit droplist featureaudit-report/findings.json --at-least medium
    """
    level = check_level(at_least, flag="--at-least")
    if format not in ("text", "json"):
        raise SettingError(f"--format {format!r} is not one of text, json.")
    names = droplist(load_findings(findings), level)
    if format == "json":
        print(json.dumps(names, ensure_ascii=False))
    else:
        from featureaudit.names import quote_name

        for name in names:
            print(quote_name(name))
    return 0


@app.command()
def diff(
    old: Annotated[Path, typer.Argument(metavar="OLD", help="findings.json of the earlier run.")],
    new: Annotated[Path, typer.Argument(metavar="NEW", help="findings.json of the later run.")],
    fail_at: Annotated[
        str | None,
        typer.Option(
            metavar="[critical|high|medium|low]",
            help="Exit 1 when a new or raised finding reaches this level.",
        ),
    ] = None,
    format: Annotated[
        str, typer.Option(metavar="[text|json|markdown]", help="Output format.")
    ] = "text",
) -> int:
    """Print columns and split findings that are new, gone or changed level between two runs,
    highest level first ("cannot tell" where a check could not judge the new run), after the
    tables compared, the change of the headline score and the dictionary's coverage; accepted
    ones are marked and never fail.

    Example: featureaudit diff last-month/findings.json featureaudit-report/findings.json
    --fail-at high --format markdown
    """
    from featureaudit.diff_format import FORMATS, diff_context, format_diff

    level = check_level(fail_at, flag="--fail-at") if fail_at else None
    if format not in FORMATS:
        raise SettingError(f"--format {format!r} is not one of {', '.join(FORMATS)}.")
    before, after = load_findings(old), load_findings(new)
    lines = diff_findings(before, after)
    print(format_diff(lines, format, diff_context(before, after)))
    if level and any(d.counts_at(level) for d in lines):
        return 1
    return 0


@app.command("history")
def history_cmd(
    folder: Annotated[
        Path, typer.Argument(metavar="FOLDER", help="The folder given to scan --history.")
    ],
    column: Annotated[str | None, typer.Option(help="Show this column only.")] = None,
) -> int:
    """Print each column's level and score in every stored run, oldest first, and which
    runs raised it.

    Example: featureaudit history audit-history --column reminders_sent
    """
    from featureaudit.history import history_lines, load_runs, series

    runs = load_runs(folder)
    if column is not None and runs and column not in series([r.findings for r in runs]):
        from featureaudit.errors import ColumnNotFound

        raise ColumnNotFound(
            f"--column {column!r} is in none of the {len(runs)} runs in {str(folder)!r}; "
            "pass a column the audits reported."
        )
    print("\n".join(history_lines(runs, column)))
    return 0


@app.command("dictionary")
def dictionary_cmd(
    table: Annotated[Path, typer.Argument(metavar="TABLE", help="The table to describe.")],
    target: Annotated[str | None, typer.Option(help="Mark this column as the target.")] = None,
    encoding: Annotated[
        str | None,
        typer.Option(help="Encoding of a CSV that is not UTF-8 (e.g. latin-1, cp1252)."),
    ] = None,
) -> int:
    """Print a draft data dictionary CSV for TABLE: every column with a guessed role.

    Example: featureaudit dictionary invoices.csv --target late_over_30d > dictionary.csv
    """
    from featureaudit.dictionary import draft_dictionary
    from featureaudit.io import read_table

    frame = read_table(table, encoding=encoding)
    if target is not None and target not in frame.columns:
        from featureaudit.errors import ColumnNotFound

        raise ColumnNotFound(
            f"--target column {target!r} is not in {table.name}; columns are: "
            f"{', '.join(frame.columns[:30])}. Pass --target with one of them."
        )
    from featureaudit.dictionary import add_suggestions

    sys.stdout.write(add_suggestions(draft_dictionary(frame, target=target), frame, target=target))
    return 0


@app.command()
def demo(
    out: Annotated[str, typer.Option(help="Report folder.")] = "featureaudit-report",
) -> int:
    """Run the full scan on the shipped invoice scenario and print where the dossier is.

    Example: featureaudit demo --out demo-report
    """
    from featureaudit.demo import run_demo

    result, out_dir = run_demo(out)
    _print_outcome(result.document, out_dir)
    return 0


@app.command()
def version() -> int:
    """Print the version. Example: featureaudit version"""
    print(__version__)
    return 0


# ---- featureaudit code: static audit of training scripts and notebooks ----------------------
@app.command("code")
def code_cmd(
    paths: Annotated[
        list[Path],
        typer.Argument(
            metavar="PATHS", help="Python scripts, .ipynb notebooks or folders of them."
        ),
    ],
    out: Annotated[str, typer.Option(help="Folder for code-findings.json (and .sarif).")] = ".",
    format: Annotated[
        str, typer.Option(metavar="[text|json|sarif]", help="Output on stdout.")
    ] = "text",
    fail_at: Annotated[
        str | None,
        typer.Option(
            metavar="[critical|high|medium|low]", help="Exit 1 when a finding reaches this level."
        ),
    ] = None,
) -> int:
    """Audit training code statically (nothing is run) for leakage the table cannot show.

    Example: featureaudit code train.py notebooks/ --format sarif --fail-at high
    """
    from featureaudit.code import audit_code
    from featureaudit.code.output import check_out, document, sarif, text_lines, write_outputs

    if format not in ("text", "json", "sarif"):
        raise SettingError(f"--format {format!r} is not one of text, json, sarif.")
    level = check_level(fail_at, flag="--fail-at") if fail_at else None
    check_out(Path(out))
    result = audit_code(list(paths))
    write_outputs(result, Path(out), with_sarif=format == "sarif")
    if format == "json":
        print(json.dumps(document(result), indent=2, ensure_ascii=False))
    elif format == "sarif":
        print(json.dumps(sarif(result), indent=2, ensure_ascii=False))
    else:
        print("\n".join(text_lines(result)))
    for error in result.errors:
        print(f"featureaudit: error: {error}", file=sys.stderr)
    if result.errors:
        return 2
    if level and any(f.level >= Level.parse(level) for f in result.findings):
        return 1
    return 0


def main() -> None:
    """Console entry point. Libraries' deprecation notices are for their developers, not for
    the user of a command line: they are kept off stderr, which carries our one-line messages."""
    import warnings

    warnings.filterwarnings("ignore", category=FutureWarning)
    warnings.filterwarnings("ignore", category=DeprecationWarning)
    app()
