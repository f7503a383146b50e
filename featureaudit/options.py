"""``scan``'s options, built from the declarations of :class:`~featureaudit.load.inputs.Inputs` and
of the settings that take a flag, so that every flag can be followed from the command line to
the field that checks it, and a new input is one declaration.

:func:`declared_options` is a decorator: the command keeps its own parameters (the table, the
config file) and gains one typer option per declaration; the values reach it as ``flags``.
"""

from __future__ import annotations

import functools
import inspect
from collections.abc import Callable
from typing import Annotated, Any

import typer

from featureaudit.load.inputs import InputSpec, input_specs
from featureaudit.load.settings import Settings

__all__ = ["declared_options"]

_TYPES: dict[str, Any] = {
    "text": str | None,
    "number": float | None,
    "whole": int | None,
    "switch": bool,
    "repeated": list[str] | None,
}


def _input_option(spec: InputSpec) -> inspect.Parameter:
    default = False if spec.kind == "switch" else None
    option = typer.Option(spec.flag, help=spec.help, metavar=spec.metavar, show_default=False)
    return inspect.Parameter(
        spec.name,
        inspect.Parameter.KEYWORD_ONLY,
        default=default,
        annotation=Annotated[_TYPES[spec.kind], option],
    )


def _setting_option(name: str, meta: Any, kind: str) -> inspect.Parameter:
    option = typer.Option(
        meta["flag"], help=meta["help"], metavar=meta["metavar"], show_default=False
    )
    return inspect.Parameter(
        name,
        inspect.Parameter.KEYWORD_ONLY,
        default=None,
        annotation=Annotated[_TYPES[kind], option],
    )


def _declared() -> list[inspect.Parameter]:
    params = [_input_option(s) for s in input_specs() if s.flag.startswith("--")]
    for f in Settings.flagged():
        kind = "whole" if f.type in (int, "int") else "text"
        params.append(_setting_option(f.name, f.metadata, kind))
    return params


def declared_options(command: Callable[..., Any]) -> Callable[..., Any]:
    """Give ``command(own parameters..., flags)`` one option per declared input and flagged
    setting; a switch left off arrives as ``None`` (not given), like any flag not given."""
    own = [
        p
        for p in inspect.signature(command, eval_str=True).parameters.values()
        if p.name != "flags"
    ]
    declared = _declared()
    names = [p.name for p in declared]

    @functools.wraps(command)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        flags = {n: kwargs.pop(n) for n in names if n in kwargs}
        for p in declared:
            if flags.get(p.name) is False or flags.get(p.name) == []:
                flags[p.name] = None
        return command(*args, flags=flags, **kwargs)

    wrapper.__signature__ = inspect.Signature(  # type: ignore[attr-defined]
        [*own, *declared], return_annotation=inspect.Signature.empty
    )
    wrapper.__annotations__ = {p.name: p.annotation for p in [*own, *declared]}
    return wrapper
