"""Data flow over parsed units: which rows each value holds, where they were split, and which
fits shaped the rows a model was trained on.

An abstract interpreter walks the statements in file order (notebook cells one after another)
and records *events* (a fit, a statistic applied, a score) and *splits*. A split is any
operation that makes disjoint parts of some rows (``train_test_split``, fold indices, a mask,
two positional slices, ``sample`` then ``drop``); an assignment starts a new flow for its name;
a loop over frames runs its body once per frame; functions of the file are followed with their
arguments. The rules in :mod:`featureaudit.code.audit` judge the events once the whole file is
seen (a split in a later cell still counts).

Which side of two positional slices is held out is decided by use: the side a model is fitted
on is the training side, so the file is walked twice (:func:`analyse`).
"""

from __future__ import annotations

import ast
import contextlib
import re
from dataclasses import replace
from typing import Any, TypeGuard

from featureaudit.code.parse import Unit
from featureaudit.code.values import ALL, HELDOUT, TEST, TRAIN, VALID, Event, Split, Val, name_role

__all__ = ["Flow", "analyse", "common_prefix"]

_WORDS = {
    TRAIN: {"train", "training", "fit"},
    VALID: {"valid", "val", "validation", "dev"},
    TEST: {"test", "holdout", "heldout", "eval"},
}
MAX_FRAMES = 6  # a loop over at most this many frames runs once per frame: common practice
ROW_ATTRS = {"values", "loc", "iloc", "T", "str", "dt", "array"}
META_ATTRS = {"shape", "columns", "dtypes", "index", "size", "ndim", "feature_names"}


def dotted(node: ast.AST) -> str:
    """``np.linalg.norm`` for an attribute chain (``?`` for anything else); iterative, so a
    50,000-long chain costs no recursion."""
    parts: list[str] = []
    while isinstance(node, ast.Attribute):
        parts.append(node.attr)
        node = node.value
    if isinstance(node, ast.Call) and not isinstance(node.func, ast.Call):
        parts.append(dotted(node.func) + "()")
    else:
        parts.append(node.id if isinstance(node, ast.Name) else "?")
    return ".".join(reversed(parts))


def root_name(node: ast.AST) -> str | None:
    """The variable at the root of ``df[col].x`` or ``df.loc[...]`` (None for anything else)."""
    while isinstance(node, ast.Attribute | ast.Subscript):
        node = node.value
    return node.id if isinstance(node, ast.Name) else None


def merge_roles(roles: list[str | None]) -> str | None:
    known = {r for r in roles if r}
    if not known:
        return None
    if len(known) == 1:
        return known.pop()
    return ALL if (TRAIN in known or ALL in known) else TEST


def common_prefix(provs: list[tuple[str, ...]]) -> tuple[str, ...]:
    """Rows joined back together come from the last point their parts share."""
    if not provs:
        return ()
    out = provs[0]
    for p in provs[1:]:
        n = 0
        while n < min(len(out), len(p)) and out[n] == p[n]:
            n += 1
        out = out[:n]
    return out


def rows_of(vals: list[Val | None]) -> list[Val]:
    """The row values among ``vals``, looking one level into tuples (``eval_set=[(X, y)]``)."""
    out: list[Val] = []
    for v in vals:
        if v is None:
            continue
        if v.kind == "tuple":
            out += rows_of(list(v.items))
        elif v.kind == "rows":
            out.append(v)
    return out


class Flow:
    """Walk the units of one file and collect events and splits (see the module docstring)."""

    def __init__(
        self,
        fitted_sides: frozenset[str] = frozenset(),
        mask_roles: dict[str, set[str]] | None = None,
    ) -> None:
        self.env: dict[str, Val] = {}
        self.assigned: set[str] = set()
        self.consts: dict[str, Any] = {}
        self.funcs: dict[str, ast.FunctionDef] = {}
        self.called: set[str] = set()
        self.events: list[Event] = []
        self.splits: list[Split] = []
        self.reached: set[int] = set()  # events whose output reached a model's training rows
        self.applied: set[int] = set()  # statistics that chose the columns of some rows
        self.model_provs: set[tuple[str, ...]] = set()  # rows models were trained or scored on
        self.targets: set[str] = set()  # columns models were trained to predict
        self.model_sides: set[str] = set()  # positional sides a model was fitted on
        self.known_sides = fitted_sides  # ... as found by the first walk
        self.mask_roles: dict[str, set[str]] = {}  # parts each masked table was cut into
        self.known_masks = mask_roles  # ... as found by the first walk (None: this is it)
        self.loops: list[int] = []
        self.loop_selects: set[int] = set()
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
            try:
                got = self.stmt(stmt)
            except RecursionError:  # a statement nested past Python's stack: left out
                got = None
            ret = got if got is not None else ret
        return ret

    def stmt(self, s: ast.stmt) -> Val | None:
        handler = _STATEMENTS.get(type(s))
        return handler(self, s) if handler else None

    def _def(self, s: ast.FunctionDef) -> None:
        self.funcs[s.name] = s

    def _assign(self, s: ast.Assign) -> None:
        val = self.ev(s.value)
        for target in s.targets:
            self.bind(target, val, s.lineno, s.value)

    def _ann_assign(self, s: ast.AnnAssign) -> None:
        if s.value is not None:
            self.bind(s.target, self.ev(s.value), s.lineno, s.value)

    def _aug_assign(self, s: ast.AugAssign) -> None:
        op = ast.BinOp(left=s.target, op=s.op, right=s.value)
        ast.copy_location(op, s)
        val = self.ev(op)
        if isinstance(s.target, ast.Name) and val is not None:
            self.env[s.target.id] = val

    def _expr(self, s: ast.Expr) -> None:
        self.ev(s.value)

    def _return(self, s: ast.Return) -> Val | None:
        return self.ev(s.value) if s.value is not None else None

    def _for(self, s: ast.For) -> Val | None:
        it = self.ev(s.iter)
        self.loops.append(id(s))
        if self._has_choice(s.body):
            self.loop_selects.add(id(s))
        frames = [x for x in it.items if x is not None] if it and it.kind == "tuple" else []
        ret = None
        if frames and len(frames) <= MAX_FRAMES and all(rows_of([x]) for x in frames):
            for frame in frames:  # one pass per frame: a fit on each of train, valid, test
                self.bind(s.target, frame, s.lineno, None)
                ret = self.block(s.body) or ret
        else:
            self.bind_loop(s.target, it, s.lineno)
            ret = self.block(s.body)
        self.loops.pop()
        self.block(s.orelse)
        return ret

    def _while(self, s: ast.While) -> Val | None:
        self.ev(s.test)
        self.loops.append(id(s))
        if self._has_choice(s.body):
            self.loop_selects.add(id(s))
        ret = self.block(s.body)
        self.loops.pop()
        return ret

    def _if(self, s: ast.If) -> Val | None:
        self.ev(s.test)
        a = self.block(s.body)
        b = self.block(s.orelse)
        return a or b

    def _with(self, s: ast.With) -> Val | None:
        return self.block(s.body)

    def _try(self, s: ast.Try) -> Val | None:
        ret = self.block(s.body)
        for h in s.handlers:
            self.block(h.body)
        self.block(s.orelse)
        self.block(s.finalbody)
        return ret

    @staticmethod
    def _has_choice(body: list[ast.stmt]) -> bool:
        """Does a loop body pick a winner (an ordering comparison in an ``if``, or a name with
        ``best`` in it assigned)?"""
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

    # ---- binding ----------------------------------------------------------------------
    def bind(self, target: ast.AST, val: Val | None, line: int, source: ast.AST | None) -> None:
        if isinstance(target, ast.Name):
            self._bind_name(target.id, val, line, source)
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
        elif isinstance(target, ast.Subscript | ast.Attribute):
            self._bind_into(target, val)

    def _bind_name(self, name: str, val: Val | None, line: int, source: ast.AST | None) -> None:
        self.assigned.add(name)
        if isinstance(source, ast.List | ast.Tuple | ast.Constant):
            with contextlib.suppress(ValueError, TypeError, SyntaxError, RecursionError):
                self.consts[name] = ast.literal_eval(source)
        if val is None:
            self.env.pop(name, None)
            return
        if val.kind == "rows" and val.cls == "reader" and isinstance(source, ast.Call):
            named = name_role(name)  # X_test = pd.read_csv(...): held-out rows from disk
            if named in HELDOUT and val.role == ALL:
                val = replace(val, role=named)
        self.env[name] = val.step(f"{name} (line {line})") if val.kind in ("rows", "stat") else val

    def _bind_into(self, target: ast.Subscript | ast.Attribute, val: Val | None) -> None:
        """``df[cols] = ...`` changes ``df``: it now carries what shaped the new columns;
        ``results[k] = score`` makes ``results`` a collection of scores."""
        name = root_name(target)
        if name is None or val is None:
            return
        old = self.env.get(name)
        if old is not None and old.kind == "rows":
            line = getattr(target, "lineno", 0)
            taint = self.stat_use([val], line, [old]) if val.kind == "stat" else frozenset()
            self.env[name] = old.tainted(val.taint | taint)
        elif val.kind == "score":
            self.env[name] = val

    def bind_loop(self, target: ast.AST, it: Val | None, line: int) -> None:
        if it is not None and it.kind == "folds":
            pair = Val(
                "tuple",
                items=(
                    Val("index", TRAIN, prov=(f"{it.cls}:a",)),
                    Val("index", VALID, prov=(f"{it.cls}:b",)),
                ),
            )
            if (
                isinstance(target, ast.Tuple)
                and len(target.elts) == 2
                and isinstance(target.elts[1], ast.Tuple)
                and it.family == "enumerate"
            ):
                self.bind(target.elts[1], pair, line, None)
            else:
                self.bind(target, pair, line, None)
        elif it is not None and it.kind == "stat":
            self.bind(target, it, line, None)
        elif it is not None and it.kind == "tuple" and it.items:
            self.bind(target, it.items[0], line, None)
        else:
            self.bind(target, None, line, None)

    # ---- expressions ------------------------------------------------------------------
    def ev(self, e: ast.AST | None) -> Val | None:
        if e is None:
            return None
        handler = _EXPRESSIONS.get(type(e))
        return handler(self, e) if handler else None

    def _name(self, e: ast.Name) -> Val | None:
        if e.id in self.env:
            return self.env[e.id]
        if e.id in self.assigned:
            return None
        role = name_role(e.id)  # a name from outside the file: its name is all we have
        if role is None:
            return None
        return Val("rows", role, prov=(f"name:{e.id}",), trail=(f"{e.id} (by its name)",))

    def _attribute(self, e: ast.Attribute) -> Val | None:
        base = self.ev(e.value)
        if base is None:
            return None
        if base.kind == "rows":
            if e.attr in META_ATTRS:
                return None
            if e.attr in ROW_ATTRS:
                return base
            return replace(base, columns=(*base.columns, e.attr))
        return base if base.kind in ("estimator", "stat") else None

    def _binop(self, e: ast.BinOp) -> Val | None:
        left, right = self.ev(e.left), self.ev(e.right)
        taint = self.stat_use([left, right], e.lineno, [left, right])
        vals = [v for v in (left, right) if v is not None and v.kind == "rows"]
        if vals:
            return replace(
                vals[0],
                role=merge_roles([v.role for v in vals]),
                taint=frozenset().union(*(v.taint for v in vals)) | taint,
            )
        stats = [v for v in (left, right) if v is not None and v.kind in ("stat", "score")]
        return stats[0] if stats else None

    def _unary(self, e: ast.UnaryOp) -> Val | None:
        inner = self.ev(e.operand)
        if inner is not None and inner.kind == "mask" and isinstance(e.op, ast.Invert | ast.Not):
            return replace(inner, role=TEST if inner.role == TRAIN else TRAIN)
        return inner

    def _sequence(self, e: ast.Tuple | ast.List | ast.Set) -> Val:
        return Val("tuple", items=tuple(self.ev(x) for x in e.elts))

    def _ifexp(self, e: ast.IfExp) -> Val | None:
        self.ev(e.test)
        return self.ev(e.body) or self.ev(e.orelse)

    def _comprehension(
        self, e: ast.ListComp | ast.GeneratorExp | ast.DictComp | ast.SetComp
    ) -> Val | None:
        self.loops.append(id(e))
        for gen in e.generators:
            self.bind_loop(gen.target, self.ev(gen.iter), e.lineno)
            for cond in gen.ifs:
                self.ev(cond)
        out = self.ev(e.value if isinstance(e, ast.DictComp) else e.elt)
        if isinstance(e, ast.DictComp):
            self.ev(e.key)
        self.loops.pop()
        if out is not None and out.kind == "score":
            return replace(out, loop=id(e))
        return out

    def _dict(self, e: ast.Dict) -> None:
        for v in e.values:
            self.ev(v)

    def _lambda(self, e: ast.Lambda) -> Val | None:
        return self.ev(e.body)

    def _compare(self, e: ast.Compare) -> Val | None:
        """A mask that splits rows (``df["split"] == "train"``, ``df.date < "2021"``,
        ``df.fold != k``), or a comparison of predictions with targets (a score)."""
        left = self.ev(e.left)
        rights = [self.ev(c) for c in e.comparators]
        if left is None or left.kind != "rows" or len(e.ops) != 1:
            return None
        if rights[0] is not None and rights[0].kind == "rows":
            return self.score_of([left, rights[0]], e.lineno)
        return _mask(e)

    def subscript(self, e: ast.Subscript) -> Val | None:
        base = self.ev(e.value)
        if base is None:
            self.ev(e.slice)
            return None
        if base.kind == "tuple":
            return _item(base, e.slice)
        if base.kind in ("stat", "score"):
            cols = self._columns(e.slice) if base.cls == "groupby" else ()
            return replace(base, columns=cols) if cols else base
        return self._rows_subscript(base, e) if base.kind == "rows" else None

    def _rows_subscript(self, base: Val, e: ast.Subscript) -> Val:
        """Rows indexed: a positional slice, a mask or fold indices (a split), columns chosen
        by a statistic (a selection), or named columns."""
        index = e.slice.elts[0] if isinstance(e.slice, ast.Tuple) and e.slice.elts else e.slice
        if isinstance(index, ast.Slice):
            return self._positional(base, index, e)
        sel = self.ev(index)
        if sel is not None and sel.kind in ("mask", "index") and sel.role:
            return self._by_mask(base, sel, e)
        if sel is not None and sel.kind == "stat" and sel.taint:
            self.applied |= sel.taint
            return base.tainted(sel.taint)  # columns chosen by a statistic of the rows
        cols = self._columns(index)
        return replace(base, columns=cols) if cols else base

    def _positional(self, base: Val, index: ast.Slice, e: ast.Subscript) -> Val:
        """``df.iloc[:n]`` and ``df.iloc[n:]``: two disjoint parts; the one a model is fitted
        on is the training side, the other held out (by position only when no model says)."""
        if index.lower is None and index.upper is None:
            return base
        if base.role in HELDOUT:
            return base
        assert self.unit is not None
        key = f"P[{'/'.join(base.prov)}]"
        side = f"{key}@{self.unit.cell or 0}:{e.lineno}:{e.col_offset}"
        held = VALID if base.role == TRAIN else TEST
        if side in self.known_sides:
            role = TRAIN
        elif any(s.startswith(key) for s in self.known_sides):
            role = held
        else:
            role = TRAIN if index.lower is None else held
        self.splits.append(  # a lone slice may be a preview: reach is left to the model fit
            Split(self.unit, e.lineno, "positional slices", base.prov, key=key, side=side)
        )
        return replace(base, role=role, prov=(*base.prov, side)).step(
            f"positional slice at line {e.lineno}"
        )

    def _by_mask(self, base: Val, sel: Val, e: ast.Subscript) -> Val:
        """Rows chosen by a mask or fold indices. A mask naming its part (``== "train"``) or
        a fold splits; a mask on time alone filters (``df[df.year > 2000]``), and with its
        complement splits, the side a model is fitted on being the training side."""
        if base.role in HELDOUT:
            return base
        assert self.unit is not None
        role = sel.role or TRAIN
        if sel.cls == "time":
            got = self._time_side(role, e)
            if got is None:
                return base
            role, side = got
        else:
            side = sel.prov[0] if sel.prov else f"M@{self.unit.cell or 0}:{e.lineno}:{role}"
        if base.role == TRAIN and role == TEST:
            role = VALID
        cv = sel.kind == "index"
        how = "fold indices" if cv else "a mask"
        self.add_split(Split(self.unit, e.lineno, how, base.prov, cv=cv), base)
        return replace(base, role=role, prov=(*base.prov, side)).step(f"{how} at line {e.lineno}")

    def _time_side(self, role: str, e: ast.Subscript) -> tuple[str, str] | None:
        """The role and side of a mask on time, or None when it is a lone filter."""
        assert self.unit is not None
        key = f"M[{root_name(e.value) or '?'}]"
        self.mask_roles.setdefault(key, set()).add(role)
        if self.known_masks is not None and len(self.known_masks.get(key, ())) < 2:
            return None
        side = f"{key}@{self.unit.cell or 0}:{e.lineno}:{e.col_offset}"
        if side in self.known_sides:
            role = TRAIN
        elif any(s.startswith(key) for s in self.known_sides):
            role = TEST
        return role, side

    def part(self, base: Val, role: str, side: str, line: int, how: str) -> Val:
        """One side of a split of ``base`` (recorded as a split of its rows)."""
        assert self.unit is not None
        self.add_split(Split(self.unit, line, how, base.prov), base)
        return replace(base, role=role, prov=(*base.prov, side)).step(f"{how} at line {line}")

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

    # ---- what calls record ------------------------------------------------------------
    def call(self, e: ast.Call) -> Val | None:
        from featureaudit.code.calls import dispatch

        return dispatch(self, e)

    def add_split(self, split: Split, rows: Val) -> None:
        """Record a split of ``rows``: what shaped them now reaches the evaluation, even when
        the model that follows is not in the file (a script that stops at the split)."""
        self.splits.append(split)
        self.reached |= rows.taint

    def event(self, what: str, rows: Val | None, line: int, **extra: Any) -> int:
        """Record an event on ``rows`` and return its index."""
        assert self.unit is not None
        self.events.append(
            Event(
                what,
                rows.role if rows else None,
                self.unit,
                line,
                trail=rows.trail if rows else (),
                loop=self.loops[-1] if self.loops else None,
                columns=rows.columns if rows else (),
                prov=rows.prov if rows else (),
                **extra,
            )
        )
        return len(self.events) - 1

    def stat_use(
        self, vals: list[Val | None], line: int, rows_side: list[Val | None]
    ) -> frozenset[int]:
        """A statistic of some rows applied to rows (fill, scale, clip, centre): an event, whose
        index the result carries."""
        stats = [v for v in vals if _is_stat(v)]
        rows = rows_of([v for v in rows_side if v is None or v.kind == "rows"])
        if not (stats and rows):
            return frozenset()
        stat = next((s for s in stats if s.role == ALL), stats[0])
        assert self.unit is not None
        grouped = stat.columns if stat.cls == "groupby" else None
        self.events.append(
            Event(
                "stat_use",
                stat.role,
                self.unit,
                line,
                trail=stat.trail,
                columns=rows[0].columns or stat.columns,
                loop=self.loops[-1] if self.loops else None,
                prov=stat.prov,
                extra={"applied_to": rows[0].role, "grouped": grouped},
            )
        )
        return frozenset({len(self.events) - 1})

    def score_of(self, vals: list[Val | None], line: int) -> Val:
        """A score computed from some rows: an event on the held-out ones, if any."""
        rows = rows_of(vals)
        self.model_provs.update(r.prov for r in rows)
        held = next((r for r in rows if r.role in HELDOUT), rows[0] if rows else None)
        self.event("score", held, line)
        return Val(
            "score", held.role if held else None, loop=self.loops[-1] if self.loops else None
        )

    def model_fit(self, rows: Val | None, est: Val | None = None, y: Val | None = None) -> None:
        """A model is trained on ``rows`` to predict ``y``: whatever shaped the rows (or the
        estimator) reached it, and a positional side it is fitted on is the training side."""
        taint = (rows.taint if rows else frozenset()) | (est.taint if est else frozenset())
        self.reached |= taint
        if y is not None and y.kind == "rows":
            self.targets.update(y.columns)
        if rows is not None:
            self.model_provs.add(rows.prov)
            self.model_sides.update(s for s in rows.prov if s.startswith(("P[", "M[")))

    def call_function(
        self, fn: ast.FunctionDef, args: list[Val | None], kw: dict[str, Val | None]
    ) -> Val | None:
        """Analyse a function of the file with its parameters bound to the call's values."""
        saved, saved_assigned = dict(self.env), set(self.assigned)
        params = [a.arg for a in fn.args.args]
        for p in params:
            self.env.pop(p, None)
            self.assigned.discard(p)
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
            self.env, self.assigned = saved, saved_assigned
        return ret


def _item(base: Val, index: ast.AST) -> Val | None:
    """``pair[1]`` of a tuple value."""
    if not (isinstance(index, ast.Constant) and isinstance(index.value, int)):
        return None
    i = index.value
    return base.items[i] if -len(base.items) <= i < len(base.items) else None


def _is_stat(v: Val | None) -> TypeGuard[Val]:
    return v is not None and v.kind == "stat" and v.role is not None


def _compared_column(e: ast.Compare) -> str:
    if isinstance(e.left, ast.Subscript) and isinstance(e.left.slice, ast.Constant):
        return str(e.left.slice.value).lower()
    return e.left.attr.lower() if isinstance(e.left, ast.Attribute) else ""


def _named_part(op: ast.cmpop, value: object) -> Val | None:
    """``== "train"``, ``== "test"``, ``!= "train"``: a mask naming its part."""
    if not isinstance(value, str):
        return None
    for role, words in _WORDS.items():
        if value.lower() not in words:
            continue
        if isinstance(op, ast.Eq):
            return Val("mask", role)
        if isinstance(op, ast.NotEq) and role == TRAIN:
            return Val("mask", TEST)
    return None


def _mask(e: ast.Compare) -> Val | None:
    """The part of the rows a comparison selects, when its words or its column say so."""
    column = _compared_column(e)
    op, right = e.ops[0], e.comparators[0]
    named = _named_part(op, right.value if isinstance(right, ast.Constant) else None)
    if named is not None:
        return named
    if re.search(r"date|time|year|month|day|period", column):
        if isinstance(op, ast.Lt | ast.LtE):
            return Val("mask", TRAIN, cls="time")
        if isinstance(op, ast.Gt | ast.GtE):
            return Val("mask", TEST, cls="time")
    if "fold" in column:
        return Val("mask", VALID if isinstance(op, ast.Eq) else TRAIN)
    return None


def analyse(units: list[Unit]) -> Flow:
    """Walk the file twice: the first walk finds which positional sides models are fitted on
    and which masked tables are cut into two parts; the second reads every other positional
    side as held out and a lone mask as a filter."""
    first = Flow()
    first.run(units)
    flow = Flow(frozenset(first.model_sides), first.mask_roles)
    flow.run(units)
    return flow


_STATEMENTS: dict[type, Any] = {
    ast.FunctionDef: Flow._def,
    ast.AsyncFunctionDef: Flow._def,
    ast.Assign: Flow._assign,
    ast.AnnAssign: Flow._ann_assign,
    ast.AugAssign: Flow._aug_assign,
    ast.Expr: Flow._expr,
    ast.Return: Flow._return,
    ast.For: Flow._for,
    ast.AsyncFor: Flow._for,
    ast.While: Flow._while,
    ast.If: Flow._if,
    ast.With: Flow._with,
    ast.AsyncWith: Flow._with,
    ast.Try: Flow._try,
}
_EXPRESSIONS: dict[type, Any] = {
    ast.Name: Flow._name,
    ast.Call: Flow.call,
    ast.Attribute: Flow._attribute,
    ast.Subscript: Flow.subscript,
    ast.BinOp: Flow._binop,
    ast.UnaryOp: Flow._unary,
    ast.Compare: Flow._compare,
    ast.Tuple: Flow._sequence,
    ast.List: Flow._sequence,
    ast.Set: Flow._sequence,
    ast.IfExp: Flow._ifexp,
    ast.ListComp: Flow._comprehension,
    ast.SetComp: Flow._comprehension,
    ast.GeneratorExp: Flow._comprehension,
    ast.DictComp: Flow._comprehension,
    ast.Dict: Flow._dict,
    ast.Lambda: Flow._lambda,
    ast.Starred: lambda self, e: self.ev(e.value),
    ast.NamedExpr: lambda self, e: self.ev(e.value),
    ast.BoolOp: lambda self, e: [self.ev(v) for v in e.values][-1],
}
