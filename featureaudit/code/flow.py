"""Data flow over parsed units: which variables hold all rows, training rows or held-out rows.

An abstract interpreter walks the statements in file order (notebook cells one after another),
keeps one value per name and records *events*: a fit, a statistic, a score, a split. The rules
in :mod:`featureaudit.code.audit` turn events into findings once the whole file is seen (a split
in a later cell still counts).
"""

from __future__ import annotations

import ast
import contextlib
import re
from dataclasses import dataclass, field, replace
from typing import Any

from featureaudit.code.parse import Unit
from featureaudit.code.rules import SCORE_FUNCS, family_of

__all__ = ["Val", "Event", "Flow", "ALL", "TRAIN", "VALID", "TEST", "HELDOUT"]

ALL, TRAIN, VALID, TEST = "all", "train", "valid", "test"
HELDOUT = (VALID, TEST)
READERS = re.compile(
    r"^(read_\w+|load_\w+|fetch_\w+|make_classification|make_regression|"
    r"make_blobs|make_moons|make_circles|loadtxt|genfromtxt|"
    r"standard_normal|randn)$"
)
REDUCTIONS = {
    "mean",
    "median",
    "std",
    "var",
    "quantile",
    "min",
    "max",
    "mode",
    "sum",
    "agg",
    "nanmean",
    "nanmedian",
    "nanstd",
    "percentile",
    "nanpercentile",
    "average",
    "describe",
}
MODELS = re.compile(
    r"(Classifier|Regressor|Regression|SVC|SVR|NB|Lasso|Ridge|ElasticNet|"
    r"LassoCV|RidgeCV|GBM\w*|Perceptron|Boost\w*|KNeighbors\w*)$"
)
SELECTING = {
    "max",
    "min",
    "argmax",
    "argmin",
    "idxmax",
    "idxmin",
    "sorted",
    "nlargest",
    "nsmallest",
    "sort_values",
}
_TOKENS = {
    TRAIN: {"train", "training", "tr", "trn"},
    VALID: {"valid", "val", "validation", "dev"},
    TEST: {"test", "tst", "te", "holdout", "heldout", "oos"},
}
_WORDS = {
    TRAIN: {"train", "training", "fit"},
    VALID: {"valid", "val", "validation", "dev"},
    TEST: {"test", "holdout", "heldout", "eval"},
}


def name_role(name: str) -> str | None:
    """The part a variable's name says it holds (``X_train``, ``test_df``, ``y_val``), if any."""
    tokens = set(re.split(r"[_\d]+", re.sub(r"([a-z])([A-Z])", r"\1_\2", name).lower()))
    for role in (TRAIN, VALID, TEST):
        if tokens & _TOKENS[role]:
            return role
    return None


@dataclass(frozen=True)
class Val:
    """What the analysis knows about a value: rows of some part, a statistic of them, split
    indices or a mask, an estimator, or a tuple of values."""

    kind: str  # rows, stat, index, mask, folds, estimator, tuple, score
    role: str | None = None
    trail: tuple[str, ...] = ()
    cls: str = ""  # estimator class
    family: str | None = None
    fitted_on: str | None = None
    items: tuple[Val | None, ...] = ()
    columns: tuple[str, ...] = ()

    def step(self, text: str) -> Val:
        return replace(self, trail=(self.trail + (text,))[-6:])


@dataclass
class Event:
    """Something the rules judge: what happened, on which part, where."""

    what: str  # fit, stat_use, score, resample, select_func, eval_set
    role: str | None
    unit: Unit
    line: int
    cls: str = ""
    family: str | None = None
    supervised: bool = False
    trail: tuple[str, ...] = ()
    loop: int | None = None
    columns: tuple[str, ...] = ()
    extra: dict[str, Any] = field(default_factory=dict)


def _dotted(node: ast.AST) -> str:
    if isinstance(node, ast.Name):
        return node.id
    if isinstance(node, ast.Attribute):
        return f"{_dotted(node.value)}.{node.attr}"
    if isinstance(node, ast.Call):
        return _dotted(node.func) + "()"
    return "?"


def _merge(roles: list[str | None]) -> str | None:
    known = {r for r in roles if r}
    if not known:
        return None
    if len(known) == 1:
        return known.pop()
    return ALL if (TRAIN in known or ALL in known) else TEST


class Flow:
    """Walk the units of one file and collect events (see the module docstring)."""

    def __init__(self) -> None:
        self.env: dict[str, Val] = {}
        self.consts: dict[str, Any] = {}
        self.funcs: dict[str, ast.FunctionDef] = {}
        self.called: set[str] = set()
        self.events: list[Event] = []
        self.metric_events: list[Event] = []
        self.splits: list[tuple[Unit, int, str]] = []  # (unit, line, how)
        self.loops: list[int] = []
        self.loop_selects: set[int] = set()
        self.selecting_calls = 0
        self.unit: Unit | None = None
        self.depth = 0

    # ---- statements -------------------------------------------------------------------
    def run(self, units: list[Unit]) -> None:
        for unit in units:
            self.unit = unit
            self.block(unit.tree.body)
        for name, fn in list(self.funcs.items()):
            if name not in self.called:
                self.call_function(fn, [], {})

    def block(self, body: list[ast.stmt]) -> Val | None:
        ret: Val | None = None
        for stmt in body:
            got = self.stmt(stmt)
            ret = got if got is not None else ret
        return ret

    def stmt(self, s: ast.stmt) -> Val | None:
        if isinstance(s, ast.FunctionDef | ast.AsyncFunctionDef):
            self.funcs[s.name] = s  # type: ignore[assignment]
        elif isinstance(s, ast.Assign):
            val = self.ev(s.value)
            for target in s.targets:
                self.bind(target, val, s.lineno, s.value)
        elif isinstance(s, ast.AnnAssign) and s.value is not None:
            self.bind(s.target, self.ev(s.value), s.lineno, s.value)
        elif isinstance(s, ast.AugAssign):
            self.ev(
                ast.BinOp(
                    left=s.target, op=s.op, right=s.value, lineno=s.lineno, col_offset=s.col_offset
                )
            )
        elif isinstance(s, ast.Expr):
            self.ev(s.value)
        elif isinstance(s, ast.Return):
            return self.ev(s.value) if s.value is not None else None
        elif isinstance(s, ast.For | ast.AsyncFor):
            it = self.ev(s.iter)
            self.bind_loop(s.target, it, s.lineno)
            self.loops.append(id(s))
            if self._has_choice(s.body):
                self.loop_selects.add(id(s))
            ret = self.block(s.body)
            self.loops.pop()
            self.block(s.orelse)
            return ret
        elif isinstance(s, ast.While):
            self.ev(s.test)
            self.loops.append(id(s))
            if self._has_choice(s.body):
                self.loop_selects.add(id(s))
            ret = self.block(s.body)
            self.loops.pop()
            return ret
        elif isinstance(s, ast.If):
            self.ev(s.test)
            a = self.block(s.body)
            b = self.block(s.orelse)
            return a or b
        elif isinstance(s, ast.With | ast.AsyncWith):
            return self.block(s.body)
        elif isinstance(s, ast.Try):
            ret = self.block(s.body)
            for h in s.handlers:
                self.block(h.body)
            self.block(s.orelse)
            self.block(s.finalbody)
            return ret
        return None

    def _has_choice(self, body: list[ast.stmt]) -> bool:
        """Does a loop body pick a winner (an ordering comparison in an ``if`` or a ``best``
        name assigned)?"""
        for node in ast.walk(ast.Module(body=body, type_ignores=[])):
            if isinstance(node, ast.If) and any(
                isinstance(c, ast.Compare)
                and any(isinstance(o, ast.Gt | ast.Lt | ast.GtE | ast.LtE) for o in c.ops)
                for c in ast.walk(node.test)
            ):
                return True
            if (
                isinstance(node, ast.Name)
                and isinstance(node.ctx, ast.Store)
                and "best" in node.id.lower()
            ):
                return True
        return False

    def bind(self, target: ast.AST, val: Val | None, line: int, source: ast.AST | None) -> None:
        if isinstance(target, ast.Name):
            if isinstance(source, ast.List | ast.Tuple | ast.Constant):
                with contextlib.suppress(ValueError):
                    self.consts[target.id] = ast.literal_eval(source)
            if val is None:
                self.env.pop(target.id, None)
                return
            if (
                val.kind == "rows"
                and val.role == ALL
                and isinstance(source, ast.Call)
                and READERS.match(_dotted(source.func).rsplit(".", 1)[-1])
            ):
                named = name_role(target.id) or self._path_role(source)
                if named:
                    val = replace(val, role=named)
            self.env[target.id] = (
                val.step(f"{target.id} (line {line})") if val.kind in ("rows", "stat") else val
            )
        elif isinstance(target, ast.Tuple | ast.List):
            elts = target.elts
            if val is not None and val.kind == "tuple" and len(val.items) == len(elts):
                for t, v in zip(elts, val.items, strict=True):
                    self.bind(t, v, line, None)
            else:
                for t in elts:
                    self.bind(
                        t, val if val is not None and val.kind == "rows" else None, line, None
                    )

    @staticmethod
    def _path_role(call: ast.Call) -> str | None:
        for a in call.args[:1]:
            if isinstance(a, ast.Constant) and isinstance(a.value, str):
                stem = re.split(r"[/\\]", a.value)[-1]
                return name_role(stem.split(".")[0])
        return None

    def bind_loop(self, target: ast.AST, it: Val | None, line: int) -> None:
        if it is not None and it.kind == "folds":
            pair = Val("tuple", items=(Val("index", TRAIN), Val("index", VALID)))
            if (
                isinstance(target, ast.Tuple)
                and len(target.elts) == 2
                and isinstance(target.elts[1], ast.Tuple)
                and it.cls == "enumerate"
            ):
                self.bind(target.elts[1], pair, line, None)
            else:
                self.bind(target, pair, line, None)
        elif it is not None and it.kind == "tuple" and it.items:
            self.bind(target, it.items[0], line, None)
        else:
            self.bind(target, None, line, None)

    # ---- expressions ------------------------------------------------------------------
    def ev(self, e: ast.AST | None) -> Val | None:
        if e is None:
            return None
        if isinstance(e, ast.Name):
            if e.id in self.env:
                return self.env[e.id]
            role = name_role(e.id)
            return Val("rows", role, (f"{e.id} (by its name)",)) if role else None
        if isinstance(e, ast.Call):
            return self.call(e)
        if isinstance(e, ast.Attribute):
            base = self.ev(e.value)
            if base is None:
                return None
            if base.kind == "rows":
                if e.attr in ("shape", "columns", "dtypes", "index", "size", "ndim"):
                    return None
                if e.attr in REDUCTIONS:
                    return None
                return (
                    replace(base, columns=base.columns + (e.attr,))
                    if e.attr not in ("values", "loc", "iloc", "T", "str", "dt")
                    else base
                )
            return base if base.kind in ("estimator", "stat") else None
        if isinstance(e, ast.Subscript):
            return self.subscript(e)
        if isinstance(e, ast.BinOp):
            left, right = self.ev(e.left), self.ev(e.right)
            self._stat_use([left, right], e.lineno, [left, right])
            vals = [v for v in (left, right) if v is not None and v.kind == "rows"]
            if vals:
                return replace(vals[0], role=_merge([v.role for v in vals]))
            stats = [v for v in (left, right) if v is not None and v.kind == "stat"]
            return stats[0] if stats else None
        if isinstance(e, ast.UnaryOp):
            inner = self.ev(e.operand)
            if inner is not None and inner.kind == "mask" and isinstance(e.op, ast.Invert):
                return replace(inner, role=TEST if inner.role == TRAIN else TRAIN)
            return inner
        if isinstance(e, ast.Compare):
            return self.compare(e)
        if isinstance(e, ast.Tuple | ast.List):
            return Val("tuple", items=tuple(self.ev(x) for x in e.elts))
        if isinstance(e, ast.IfExp):
            return self.ev(e.body)
        if isinstance(e, ast.ListComp | ast.GeneratorExp | ast.DictComp):
            self.loops.append(id(e))
            for gen in e.generators:
                self.bind_loop(gen.target, self.ev(gen.iter), e.lineno)
            out = self.ev(e.elt if not isinstance(e, ast.DictComp) else e.value)
            self.loops.pop()
            return out
        if isinstance(e, ast.Dict):
            for v in e.values:
                self.ev(v)
        return None

    def compare(self, e: ast.Compare) -> Val | None:
        """A boolean mask that splits rows: ``df["split"] == "train"``, ``df.date < "2021"``,
        ``df.fold != k``."""
        left = self.ev(e.left)
        for c in e.comparators:
            self.ev(c)
        if left is None or left.kind != "rows" or len(e.ops) != 1:
            return None
        column = ""
        if isinstance(e.left, ast.Subscript) and isinstance(e.left.slice, ast.Constant):
            column = str(e.left.slice.value).lower()
        elif isinstance(e.left, ast.Attribute):
            column = e.left.attr.lower()
        op, right = e.ops[0], e.comparators[0]
        value = right.value if isinstance(right, ast.Constant) else None
        if isinstance(value, str):
            for role, words in _WORDS.items():
                if value.lower() in words:
                    if isinstance(op, ast.Eq):
                        return Val("mask", role)
                    if isinstance(op, ast.NotEq) and role == TRAIN:
                        return Val("mask", TEST)
        if re.search(r"date|time|year|month|day|period", column):
            if isinstance(op, ast.Lt | ast.LtE):
                return Val("mask", TRAIN)
            if isinstance(op, ast.Gt | ast.GtE):
                return Val("mask", TEST)
        if "fold" in column:
            return Val("mask", VALID if isinstance(op, ast.Eq) else TRAIN)
        if "split" in column or "is_train" in column or "is_test" in column:
            return Val("mask", None)
        return None

    def subscript(self, e: ast.Subscript) -> Val | None:
        base = self.ev(e.value)
        if isinstance(e.value, ast.Attribute) and e.value.attr in ("loc", "iloc") and base:
            pass
        if base is None:
            self.ev(e.slice)
            return None
        if base.kind == "tuple":
            if (
                isinstance(e.slice, ast.Constant)
                and isinstance(e.slice.value, int)
                and -len(base.items) <= e.slice.value < len(base.items)
            ):
                return base.items[e.slice.value]
            return None
        if base.kind == "stat":
            return base
        if base.kind != "rows":
            return None
        index = e.slice.elts[0] if isinstance(e.slice, ast.Tuple) and e.slice.elts else e.slice
        if isinstance(index, ast.Slice):
            if index.lower is None and index.upper is None:
                return base
            part = TRAIN if index.lower is None else TEST
            return self._split_part(base, part, e.lineno, "a positional slice")
        sel = self.ev(index)
        if sel is not None and sel.kind in ("mask", "index") and sel.role:
            part = sel.role
            if base.role == TRAIN and part == TEST:
                part = VALID
            return self._split_part(base, part, e.lineno, "a mask or fold index")
        cols = self._columns(index)
        return replace(base, columns=cols) if cols else base

    def _split_part(self, base: Val, part: str, line: int, how: str) -> Val:
        if base.role in (ALL, None, TRAIN):
            assert self.unit is not None
            self.splits.append((self.unit, line, how))
            return replace(base, role=part)
        return base

    def _columns(self, node: ast.AST) -> tuple[str, ...]:
        if isinstance(node, ast.Constant) and isinstance(node.value, str):
            return (node.value,)
        if isinstance(node, ast.List | ast.Tuple):
            return tuple(
                x.value
                for x in node.elts
                if isinstance(x, ast.Constant) and isinstance(x.value, str)
            )
        if isinstance(node, ast.Name) and isinstance(self.consts.get(node.id), list | tuple):
            return tuple(str(x) for x in self.consts[node.id])
        return ()

    # ---- calls ------------------------------------------------------------------------
    def call(self, e: ast.Call) -> Val | None:
        func = e.func
        name = (
            func.attr
            if isinstance(func, ast.Attribute)
            else (func.id if isinstance(func, ast.Name) else "")
        )
        args = [self.ev(a) for a in e.args]
        kw = {k.arg: self.ev(k.value) for k in e.keywords if k.arg}
        if name in SELECTING:
            self.selecting_calls += 1
        if isinstance(func, ast.Name) and func.id in self.funcs and self.depth < 4:
            self.called.add(func.id)
            return self.call_function(self.funcs[func.id], args, kw)
        fam = family_of(name)
        if fam is None and MODELS.search(name) and name[:1].isupper():
            fam = "model"
        if (
            fam is not None
            and isinstance(func, ast.Name | ast.Attribute)
            and not (isinstance(func, ast.Attribute) and self._is_value(func.value))
        ):
            inner = args[0] if args else kw.get("estimator")
            if fam == "search" and inner is not None and inner.family == "pipeline":
                return Val("estimator", cls=name, family="search", items=(inner,))
            if fam == "splitter":
                return Val("estimator", cls=name, family="splitter")
            return Val("estimator", cls=name, family=None if fam == "model" else fam)
        if name == "train_test_split":
            return self._tts(e, args)
        if name in (
            "cross_val_score",
            "cross_validate",
            "cross_val_predict",
            "permutation_test_score",
            "learning_curve",
            "validation_curve",
        ):
            self.splits.append((self.unit, e.lineno, name))  # type: ignore[arg-type]
            return None
        if (
            re.search(r"(_score|_error|_loss|^score)$", name)
            and name not in SCORE_FUNCS
            and not isinstance(func, ast.Attribute)
            or name in ("log_loss", "r2_score")
        ):
            rows = [a for a in [*args, *kw.values()] if a is not None and a.kind == "rows"]
            held = next((a for a in rows if a.role in HELDOUT), rows[0] if rows else None)
            assert self.unit is not None
            self.metric_events.append(
                Event(
                    "score",
                    held.role if held else None,
                    self.unit,
                    e.lineno,
                    loop=self.loops[-1] if self.loops else None,
                )
            )
            return Val("score", held.role if held else None)
        if name in SCORE_FUNCS:
            self._event("select_func", args[0] if args else None, e, cls=name, supervised=True)
            return None
        if name == "enumerate" and args and args[0] is not None and args[0].kind == "folds":
            return replace(args[0], cls="enumerate")
        if name in ("concat", "vstack", "hstack", "concatenate", "append", "merge") and not (
            isinstance(func, ast.Attribute) and self._is_value(func.value)
        ):
            parts = [
                v
                for a in args
                for v in (a.items if a and a.kind == "tuple" else (a,))
                if v is not None and v.kind == "rows"
            ]
            return Val("rows", _merge([v.role for v in parts]), parts[0].trail) if parts else None
        if name == "resample" and not isinstance(func, ast.Attribute):
            resampled = args[0] if args else None
            if self._replace_true(e):
                self._event("resample", resampled, e, cls="resample")
            return resampled
        if READERS.match(name):
            return Val("rows", ALL, (f"{_dotted(func)}(...) at line {e.lineno}: all rows",))
        if isinstance(func, ast.Attribute):
            owner = self.ev(func.value)
            if owner is not None and owner.kind == "estimator":
                return self.method(owner, name, args, kw, e)
            if owner is not None and owner.kind == "rows":
                return self.rows_method(owner, name, args, kw, e)
            if owner is None and _dotted(func.value) in ("np", "numpy", "pd", "pandas"):
                source = next((a for a in args if a is not None and a.kind == "rows"), None)
                if source is not None and name in REDUCTIONS:
                    return Val("stat", source.role, source.trail, columns=source.columns)
                self._stat_use(args, e.lineno, args)
                return source
        return None

    def _is_value(self, node: ast.AST) -> bool:
        return isinstance(node, ast.Name) and node.id in self.env

    @staticmethod
    def _replace_true(e: ast.Call) -> bool:
        return any(
            k.arg == "replace" and isinstance(k.value, ast.Constant) and k.value.value is True
            for k in e.keywords
        )

    def _tts(self, e: ast.Call, args: list[Val | None]) -> Val:
        self.splits.append((self.unit, e.lineno, "train_test_split"))  # type: ignore[arg-type]
        out: list[Val | None] = []
        for a in args:
            base = a if a is not None and a.kind == "rows" else Val("rows", None)
            heldout = VALID if base.role == TRAIN else TEST
            trail = base.trail + (f"train_test_split at line {e.lineno}",)
            out += [
                replace(
                    base, role=TRAIN if base.role in (ALL, None, TRAIN) else base.role, trail=trail
                ),
                replace(
                    base,
                    role=heldout if base.role in (ALL, None, TRAIN) else base.role,
                    trail=trail,
                ),
            ]
        return Val("tuple", items=tuple(out))

    def _event(self, what: str, rows: Val | None, e: ast.Call, **extra: Any) -> None:
        assert self.unit is not None
        self.events.append(
            Event(
                what,
                rows.role if rows else None,
                self.unit,
                e.lineno,
                trail=rows.trail if rows else (),
                loop=self.loops[-1] if self.loops else None,
                columns=rows.columns if rows else (),
                **extra,
            )
        )

    def method(
        self, est: Val, name: str, args: list[Val | None], kw: dict[str, Val | None], e: ast.Call
    ) -> Val | None:
        x = args[0] if args else kw.get("X")
        supervised = len(args) > 1 or "y" in kw
        if est.family == "splitter" and name == "split":
            self.splits.append((self.unit, e.lineno, f"{est.cls}().split"))  # type: ignore
            return Val("folds", cls=est.cls)
        if name in ("fit", "fit_transform", "fit_resample", "fit_predict"):
            if x is not None and x.kind == "rows":
                self._event(
                    "fit",
                    x,
                    e,
                    cls=est.cls,
                    family=est.family,
                    supervised=supervised,
                    extra={"method": name},
                )
            if "eval_set" in kw:
                ev_set = kw["eval_set"]
                roles = [
                    i
                    for t in (ev_set.items if ev_set and ev_set.kind == "tuple" else ())
                    for i in (t.items if t and t.kind == "tuple" else (t,))
                    if i
                ]
                if any(r.kind == "rows" and r.role == TEST for r in roles):
                    self._event("eval_set", Val("rows", TEST), e, cls=est.cls)
            if est.family == "search" and x is not None:
                self.splits.append((self.unit, e.lineno, est.cls))  # type: ignore[arg-type]
            fitted = replace(est, fitted_on=x.role if x else None)
            if name == "fit":
                return fitted
            if name == "fit_resample":
                out = x if x is not None and x.kind == "rows" else None
                y = args[1] if len(args) > 1 else None
                return Val("tuple", items=(out, y))
            return x if x is not None and x.kind == "rows" else None
        if name in (
            "transform",
            "predict",
            "predict_proba",
            "decision_function",
            "inverse_transform",
            "predict_log_proba",
        ):
            return replace(x, kind="rows") if x is not None and x.kind == "rows" else None
        if name == "score":
            self._event("score", x, e, cls=est.cls)
            return Val("score", x.role if x else None)
        return None

    def rows_method(
        self, rows: Val, name: str, args: list[Val | None], kw: dict[str, Val | None], e: ast.Call
    ) -> Val | None:
        if name in REDUCTIONS:
            return Val("stat", rows.role, rows.trail, columns=rows.columns)
        if name in ("corr", "corrwith"):
            target = [a for a in args if a is not None and a.kind == "rows"]
            self._event(
                "corr", rows, e, cls=f".{name}()", supervised=bool(target) or name == "corr"
            )
            return Val("stat", rows.role, rows.trail)
        if name == "sample":
            if self._replace_true(e):
                self._event("resample", rows, e, cls="DataFrame.sample(replace=True)")
                return rows
            return self._split_part(
                rows, TRAIN if rows.role != TRAIN else VALID, e.lineno, "df.sample"
            )
        if name == "drop":
            by = (
                e.args[0]
                if e.args
                else next((k.value for k in e.keywords if k.arg == "index"), None)
            )
            if isinstance(by, ast.Attribute) and by.attr == "index":
                other = self.ev(by.value)
                if other is not None and other.kind == "rows" and other.role == TRAIN:
                    return self._split_part(rows, TEST, e.lineno, "df.drop(train.index)")
        if name == "query" and e.args and isinstance(e.args[0], ast.Constant):
            text = str(e.args[0].value).lower()
            for role, words in _WORDS.items():
                if any(re.search(rf"['\"]{w}['\"]", text) for w in words):
                    neg = "!=" in text and role == TRAIN
                    return self._split_part(rows, TEST if neg else role, e.lineno, "df.query")
        self._stat_use([rows, *args, *kw.values()], e.lineno, [rows])
        if name in ("groupby", "value_counts", "nunique", "count", "isna", "isnull"):
            return None
        return rows

    def _stat_use(self, vals: list[Val | None], line: int, rows_side: list[Val | None]) -> None:
        """A statistic of some rows applied to rows (fill, scale, clip, centre)."""
        stats = [v for v in vals if v is not None and v.kind == "stat" and v.role is not None]
        rows = [v for v in rows_side if v is not None and v.kind == "rows"]
        if stats and rows:
            assert self.unit is not None
            stat = next((s for s in stats if s.role == ALL), stats[0])
            self.events.append(
                Event(
                    "stat_use",
                    stat.role,
                    self.unit,
                    line,
                    trail=stat.trail,
                    columns=rows[0].columns or stat.columns,
                    loop=self.loops[-1] if self.loops else None,
                    extra={"applied_to": rows[0].role},
                )
            )

    def call_function(
        self, fn: ast.FunctionDef, args: list[Val | None], kw: dict[str, Val | None]
    ) -> Val | None:
        """Analyse a function of the file with its parameters bound to the call's values."""
        saved = dict(self.env)
        params = [a.arg for a in fn.args.args]
        for p in params:
            self.env.pop(p, None)
        for p, v in zip(params, args, strict=False):
            if v is not None:
                self.env[p] = v
        for p, v in kw.items():
            if p in params and v is not None:
                self.env[p] = v
        self.depth += 1
        try:
            ret = self.block(fn.body)
        finally:
            self.depth -= 1
            self.env = saved
        return ret
