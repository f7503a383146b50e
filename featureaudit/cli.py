"""The command line: parse flags, call the library, format the result. Nothing else lives here."""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Annotated, Any

import typer
from typer.core import TyperGroup

from featureaudit import __version__
from featureaudit.errors import FeatureAuditError, SettingError
from featureaudit.findings import diff_findings, droplist, load_findings
from featureaudit.levels import Level
from featureaudit.settings import Settings, check_level, read_config

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
        try:
            rv = super().main(*args, **kwargs)
        except FeatureAuditError as exc:
            _fail(exc)
        except usage_error as exc:
            hint = " Run `featureaudit --help` for the commands and their flags."
            print(f"featureaudit: error: {exc.format_message()}{hint}", file=sys.stderr)
            sys.exit(2)
        except KeyboardInterrupt:
            print("featureaudit: interrupted; no report was written.", file=sys.stderr)
            sys.exit(130)
        except Exception as exc:  # noqa: BLE001 — a bug: one line, no traceback, exit 3
            print(
                f"featureaudit: internal error ({type(exc).__name__}: {exc}); no report was "
                "written. Please report it with the command you ran.",
                file=sys.stderr,
            )
            sys.exit(3)
        sys.exit(rv if isinstance(rv, int) else 0)


app = typer.Typer(
    cls=_OneLineErrors,
    add_completion=False,
    rich_markup_mode=None,
    pretty_exceptions_enable=False,
    no_args_is_help=True,
    help="Audit a training table and its split for target leakage.",
)


def _fail(exc: BaseException) -> None:
    print(f"featureaudit: error: {exc}", file=sys.stderr)
    sys.exit(2)


def _reached(doc: dict[str, Any], level: str) -> list[str]:
    floor = Level.parse(level)
    hits = [c["column"] for c in doc["columns"] if Level.parse(c["level"]) >= floor]
    hits += [
        f"{f['kind']} (split)" for f in doc["dataset_findings"] if Level.parse(f["level"]) >= floor
    ]
    return hits


@app.command()
def scan(
    table: Annotated[
        Path,
        typer.Argument(help="CSV, TSV, Parquet, Feather/Arrow file or a folder of Parquet files."),
    ],
    test: Annotated[str | None, typer.Option(help="Held-out table with the same columns.")] = None,
    split_column: Annotated[str | None, typer.Option(help="Column that marks the split.")] = None,
    train_value: Annotated[
        str | None,
        typer.Option(help="Value of --split-column that marks training rows [default: train]."),
    ] = None,
    target: Annotated[str | None, typer.Option(help="The outcome column.")] = None,
    task: Annotated[str | None, typer.Option(help="binary, multiclass or numeric.")] = None,
    dictionary: Annotated[str | None, typer.Option(help="Data dictionary CSV.")] = None,
    label_time: Annotated[str | None, typer.Option(help="When each outcome became known.")] = None,
    cutoff_time: Annotated[str | None, typer.Option(help="When each prediction is made.")] = None,
    horizon: Annotated[
        str | None, typer.Option(help="Cutoff = label time minus this, e.g. 30d.")
    ] = None,
    entity: Annotated[str | None, typer.Option(help="Customer, patient… a row belongs to.")] = None,
    out: Annotated[
        str | None, typer.Option(help="Report folder [default: featureaudit-report].")
    ] = None,
    fail_at: Annotated[
        str | None, typer.Option(help="Exit 1 when a finding reaches this level.")
    ] = None,
    seed: Annotated[
        int | None, typer.Option(help="Seed of folds and samples [default: 0].")
    ] = None,
    fail_at_impact: Annotated[
        float | None,
        typer.Option(
            help="Exit 1 when the as-given validation score exceeds a corrected one by more than "
            "this, e.g. 0.02."
        ),
    ] = None,
    config: Annotated[str | None, typer.Option(help="TOML file with any of these flags.")] = None,
    # engine block: where the table is read (featureaudit/engines)
    engine: Annotated[
        str | None, typer.Option(help="auto, memory, stream or dask [default: auto].")
    ] = None,
    scheduler: Annotated[str | None, typer.Option(help="Dask scheduler address.")] = None,
    sample_rows: Annotated[
        int | None, typer.Option(help="Seeded sample for the model-based parts [default: 200000].")
    ] = None,
    quiet: Annotated[bool, typer.Option("--quiet", help="No progress on stderr.")] = False,
) -> int:
    """Audit TABLE and write dossier.html, findings.json, droplist.txt and summary.md.

    Example: featureaudit scan loans.parquet --target late --split-column split
    --dictionary dictionary.csv --label-time decided_at --fail-at high
    """
    from featureaudit.api import audit

    given = {
        "test": test,
        "split_column": split_column,
        "train_value": train_value,
        "target": target,
        "task": task,
        "dictionary": dictionary,
        "label_time": label_time,
        "cutoff_time": cutoff_time,
        "horizon": horizon,
        "entity": entity,
        "out": out,
        "fail_at": fail_at,
        "seed": seed,
        "fail_at_impact": fail_at_impact,
        "engine": engine,
        "scheduler": scheduler,
        "sample_rows": sample_rows,
        "quiet": quiet or None,
    }
    opts = dict(read_config(config)) if config else {}
    opts.update({k: v for k, v in given.items() if v is not None})
    settings_over = {k: opts.pop(k) for k in list(opts) if k in Settings.names() and k != "seed"}
    fail = check_level(opts["fail_at"], flag="--fail-at") if opts.get("fail_at") else None
    seed_value = _int(opts.get("seed", 0), "--seed")
    try:
        settings = Settings(seed=seed_value, **settings_over)
    except TypeError as exc:
        raise SettingError(f"config {config!r} has a setting of the wrong type: {exc}.") from exc
    result = audit(
        str(table),
        test=opts.get("test"),
        split_column=opts.get("split_column"),
        train_value=str(opts.get("train_value", "train")),
        target=opts.get("target"),
        task=opts.get("task"),
        dictionary=opts.get("dictionary"),
        label_time=opts.get("label_time"),
        cutoff_time=opts.get("cutoff_time"),
        horizon=opts.get("horizon"),
        entity=opts.get("entity"),
        seed=seed_value,
        settings=settings,
        progress=False if opts.get("quiet") else None,
        scheduler=opts.get("scheduler"),
    )
    out_dir = Path(opts.get("out") or "featureaudit-report")
    result.write(out_dir)
    _print_outcome(result.document, out_dir)
    if fail and _reached(result.document, fail):
        return 1
    if opts.get("fail_at_impact") is not None:
        from featureaudit.impact import largest_lift

        lift = largest_lift(result.document)
        if lift is not None and lift > float(opts["fail_at_impact"]):
            return 1
    return 0


def _int(value: Any, flag: str) -> int:
    try:
        return int(value)
    except (TypeError, ValueError) as exc:
        raise SettingError(f"{flag} must be a whole number; got {value!r}.") from exc


def _print_outcome(doc: dict[str, Any], out_dir: Path) -> None:
    from featureaudit.findings import Findings
    from featureaudit.report import verdict_line

    d = doc["dataset"]
    print(
        f"audited {d['source']}: {d['rows']} rows ({d['train_rows']} training, "
        f"{d['heldout_rows']} held out), target {d['target']} ({d['task']})"
    )
    print(verdict_line(Findings(doc)))
    top = [c for c in doc["columns"] if Level.parse(c["level"]) >= Level.MEDIUM][:8]
    for c in top:
        print(f"  {c['level']:<8} {c['score']:.2f}  {c['column']}: {c['summary']}")
    for f in doc["dataset_findings"]:
        if Level.parse(f["level"]) >= Level.MEDIUM:
            print(f"  {f['level']:<8} split  {f['kind']}: {f['summary']}")
    for warning in doc["warnings"]:
        print(f"featureaudit: warning: {warning}", file=sys.stderr)
    print(f"dossier: {out_dir / 'dossier.html'}")


@app.command("droplist")
def droplist_cmd(
    findings: Annotated[Path, typer.Argument(help="findings.json written by scan.")],
    at_least: Annotated[str, typer.Option(help="Lowest level to drop.")] = "high",
    format: Annotated[str, typer.Option(help="text or json.")] = "text",
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
        for name in names:
            print(name)
    return 0


@app.command()
def diff(
    old: Annotated[Path, typer.Argument(help="findings.json of the earlier run.")],
    new: Annotated[Path, typer.Argument(help="findings.json of the later run.")],
    fail_at: Annotated[
        str | None, typer.Option(help="Exit 1 when a new or raised finding reaches this level.")
    ] = None,
) -> int:
    """Print columns and split findings that are new, gone or changed level between two runs.

    Example: featureaudit diff last-month/findings.json featureaudit-report/findings.json
    --fail-at high
    """
    level = check_level(fail_at, flag="--fail-at") if fail_at else None
    lines = diff_findings(load_findings(old), load_findings(new))
    if not lines:
        print("no change in levels")
    for line in lines:
        print(line.text())
    if level and any(
        d.change in ("new", "raised")
        and d.new_level
        and Level.parse(d.new_level) >= Level.parse(level)
        for d in lines
    ):
        return 1
    return 0


@app.command("dictionary")
def dictionary_cmd(
    table: Annotated[Path, typer.Argument(help="The table to describe.")],
    target: Annotated[str | None, typer.Option(help="Mark this column as the target.")] = None,
) -> int:
    """Print a draft data dictionary CSV for TABLE: every column with a guessed role.

    Example: featureaudit dictionary invoices.csv --target late_over_30d > dictionary.csv
    """
    from featureaudit.dictionary import draft_dictionary
    from featureaudit.io import read_table

    frame = read_table(table)
    if target is not None and target not in frame.columns:
        from featureaudit.errors import ColumnNotFound

        raise ColumnNotFound(
            f"--target column {target!r} is not in {table.name}; columns are: "
            f"{', '.join(frame.columns[:30])}. Pass --target with one of them."
        )
    sys.stdout.write(draft_dictionary(frame, target=target))
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
        list[Path], typer.Argument(help="Python scripts, .ipynb notebooks or folders of them.")
    ],
    out: Annotated[str, typer.Option(help="Folder for code-findings.json (and .sarif).")] = ".",
    format: Annotated[str, typer.Option(help="text, json or sarif (stdout).")] = "text",
    fail_at: Annotated[
        str | None, typer.Option(help="Exit 1 when a finding reaches this level.")
    ] = None,
) -> int:
    """Audit training code statically (nothing is run) for leakage the table cannot show.

    Example: featureaudit code train.py notebooks/ --format sarif --fail-at high
    """
    from featureaudit.code import audit_code
    from featureaudit.code.output import document, sarif, text_lines, write_outputs

    if format not in ("text", "json", "sarif"):
        raise SettingError(f"--format {format!r} is not one of text, json, sarif.")
    level = check_level(fail_at, flag="--fail-at") if fail_at else None
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
    """Console entry point."""
    app()
