"""What a call does to the data flow, as a dispatch table: readers make rows, splitters divide
them, estimators fit and transform them, metrics score them, ``max``/``argmax`` choose.

:func:`dispatch` tries, in order: the table of function names (:data:`BY_NAME`), estimator
constructors, readers, metrics, then the table of methods for the kind of value the method is
called on (:data:`ESTIMATOR_METHODS`, :data:`ROWS_METHODS`, :data:`OTHER_METHODS`).
"""

from __future__ import annotations

import ast
import re
from collections.abc import Callable
from dataclasses import dataclass, replace

from featureaudit.code.flow import Flow, common_prefix, dotted, merge_roles, root_name, rows_of
from featureaudit.code.rules import SCORE_FUNCS, family_of
from featureaudit.code.values import ALL, HELDOUT, TEST, TRAIN, VALID, Split, Val, name_role

__all__ = ["dispatch"]

READERS = re.compile(
    r"^(read_\w+|load_\w+|fetch_\w+|make_classification|make_regression|make_blobs|"
    r"make_moons|make_circles|loadtxt|genfromtxt|standard_normal|randn|rand|normal)$"
)
PASSTHROUGH = {
    "DataFrame",
    "Series",
    "array",
    "asarray",
    "DMatrix",
    "Dataset",
    "Pool",
    "tensor",
    "from_numpy",
    "TensorDataset",
    "get_dummies",
    "ravel",
    "reshape",
    "log1p",
    "log",
    "sqrt",
    "abs",
    "float32",
}
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
    r"(Classifier|Regressor|Regression|SVC|SVR|NB|Lasso|Ridge|ElasticNet|LassoCV|RidgeCV|"
    r"GBM\w*|Perceptron|Boost\w*|KNeighbors\w*)$"
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
CV_CALLS = {
    "cross_val_score",
    "cross_validate",
    "cross_val_predict",
    "permutation_test_score",
    "learning_curve",
    "validation_curve",
}
CALLBACKS = {"EarlyStopping", "ModelCheckpoint", "early_stopping"}
JOINS = {"concat", "vstack", "hstack", "concatenate", "append", "merge", "column_stack"}
MODULES = {"np", "numpy", "pd", "pandas"}
BOOSTERS = {"xgb", "xgboost", "lgb", "lightgbm"}
FITS = {"fit", "fit_transform", "fit_resample", "fit_predict", "fit_sample"}
APPLIES = {
    "transform",
    "predict",
    "predict_proba",
    "decision_function",
    "inverse_transform",
    "predict_log_proba",
}


@dataclass
class Call:
    """One call being read: the flow, the node, its name and its evaluated arguments."""

    flow: Flow
    e: ast.Call
    name: str
    args: list[Val | None]
    kw: dict[str, Val | None]

    @property
    def line(self) -> int:
        return self.e.lineno

    @property
    def x(self) -> Val | None:
        return self.args[0] if self.args else self.kw.get("X")

    def flag(self, key: str) -> bool:
        """Is keyword ``key`` given a literal True?"""
        return any(
            k.arg == key and isinstance(k.value, ast.Constant) and k.value.value is True
            for k in self.e.keywords
        )

    def literal(self, key: str) -> object:
        for k in self.e.keywords:
            if k.arg == key and isinstance(k.value, ast.Constant):
                return k.value.value
        return None

    def site(self) -> str:
        unit = self.flow.unit
        return f"{unit.cell or 0 if unit else 0}:{self.e.lineno}:{self.e.col_offset}"


Handler = Callable[[Call], "Val | None"]


def _name_of(func: ast.AST) -> str:
    if isinstance(func, ast.Attribute):
        return func.attr
    return func.id if isinstance(func, ast.Name) else ""


def dispatch(flow: Flow, e: ast.Call) -> Val | None:
    """Read one call (see the module docstring for the order of the tables)."""
    name = _name_of(e.func)
    choosing = name in SELECTING
    if choosing:  # a key= lambda scoring candidates is a loop that picks the best
        flow.loops.append(id(e))
        flow.loop_selects.add(id(e))
    try:
        args = [flow.ev(a) for a in e.args]
        kw = {k.arg: flow.ev(k.value) for k in e.keywords if k.arg}
    finally:
        if choosing:
            flow.loops.pop()
    c = Call(flow, e, name, args, kw)
    if choosing:
        _choose(c)
    if isinstance(e.func, ast.Name) and e.func.id in flow.funcs and flow.depth < 4:
        flow.called.add(e.func.id)
        return flow.call_function(flow.funcs[e.func.id], args, kw)
    by_name = BY_NAME.get(name)
    if by_name is not None and not _on_value(flow, e.func):
        return by_name(c)
    for test, handler in SHAPES:
        if test(c):
            return handler(c)
    return _method(c) if isinstance(e.func, ast.Attribute) else None


def _on_value(flow: Flow, func: ast.AST, *, known: bool = False) -> bool:
    """Is this a method of a value (``df.append``, ``make().fit``), not a library function
    (``pd.concat``)? Read from the syntax, so nothing is evaluated twice. With ``known``, only
    values the flow holds count (``rng.standard_normal`` of an unknown generator reads)."""
    if not isinstance(func, ast.Attribute):
        return False
    node = func.value
    while isinstance(node, ast.Attribute):
        node = node.value
    if isinstance(node, ast.Name):
        return node.id in flow.env or (not known and node.id in flow.assigned)
    return True


def _choose(c: Call) -> None:
    """``max(scores)``, ``np.argmax(scores)``: the loop that made the scores chose by them."""
    for v in [*c.args, *c.kw.values()]:
        if v is not None and v.kind == "score" and v.loop is not None:
            c.flow.loop_selects.add(v.loop)


# ---- by function name ----------------------------------------------------------------
def _tts(c: Call) -> Val:
    """``train_test_split``: every array gives a first (training) and second (held-out) part;
    a held-out part split again gives two held-out parts."""
    out: list[Val | None] = []
    seen: set[tuple[str, ...]] = set()
    site = f"S@{c.site()}"
    for a in c.args:
        base = a if a is not None and a.kind == "rows" else Val("rows", None)
        if base.role in HELDOUT:
            roles = (VALID, TEST)
        else:
            roles = (TRAIN, VALID if base.role == TRAIN else TEST)
        if base.prov and base.prov not in seen:
            seen.add(base.prov)
            assert c.flow.unit is not None
            c.flow.add_split(Split(c.flow.unit, c.line, "train_test_split", base.prov), base)
        for role, side in zip(roles, ("a", "b"), strict=True):
            part = replace(
                base, role=role, prov=(*base.prov, f"{site}:{side}") if base.prov else ()
            )
            out.append(part.step(f"train_test_split at line {c.line}"))
    return Val("tuple", items=tuple(out))


def _cross_val(c: Call) -> Val:
    est = c.args[0] if c.args else c.kw.get("estimator")
    x = c.args[1] if len(c.args) > 1 else c.kw.get("X")
    if x is not None and x.kind == "rows" and c.flow.unit is not None:
        c.flow.splits.append(Split(c.flow.unit, c.line, c.name, x.prov, cv=True))
    c.flow.model_fit(x, est, y=c.args[2] if len(c.args) > 2 else c.kw.get("y"))
    return Val("score", None)


def _enumerate(c: Call) -> Val | None:
    a = c.args[0] if c.args else None
    return replace(a, family="enumerate") if a is not None and a.kind == "folds" else None


def _join(c: Call) -> Val | None:
    parts = rows_of(c.args)
    if not parts:
        return None
    # parts of one table rejoin where they last shared rows; frames of different sources
    # (train.csv and test.csv) become a new table of their own, which a later split divides
    prov = common_prefix([v.prov for v in parts]) or (f"join@{c.site()}",)
    return Val(
        "rows",
        merge_roles([v.role for v in parts]),
        prov=prov,
        trail=parts[0].trail,
        taint=frozenset().union(*(v.taint for v in parts)),
    )


def _resample(c: Call) -> Val | None:
    rows = c.x
    if rows is None or rows.kind != "rows" or c.literal("replace") is False:
        return rows
    idx = c.flow.event("resample", rows, c.line, cls="resample")
    return rows.tainted(frozenset({idx}))


def _callback(c: Call) -> Val:
    return Val("callback", cls=c.name)


def _select(c: Call) -> Val | None:
    rows = c.args[0] if c.args else None
    c.flow.event("select_func", rows, c.line, cls=c.name, supervised=True)
    return None


def _booster_train(c: Call) -> Val | None:
    """``xgb.train(params, dtrain, n, evals=[(dtest, "test")], early_stopping_rounds=...)`` and
    ``lgb.train(..., valid_sets=[...], callbacks=[lgb.early_stopping(...)])``."""
    if not (isinstance(c.e.func, ast.Attribute) and dotted(c.e.func.value) in BOOSTERS):
        return None
    rows = c.args[1] if len(c.args) > 1 else c.kw.get("dtrain") or c.kw.get("train_set")
    c.flow.model_fit(rows, y=rows)
    _early_stop(c, None, c.args[3:])
    return Val("estimator", cls=dotted(c.e.func))


SCALE_FUNCTIONS = {
    "scale",
    "minmax_scale",
    "robust_scale",
    "maxabs_scale",
    "quantile_transform",
    "power_transform",
}


def _scale_function(c: Call) -> Val | None:
    """``preprocessing.scale(X)`` fits and applies a scaler in one call."""
    rows = c.x
    if rows is None or rows.kind != "rows":
        return None
    idx = c.flow.event(
        "fit", rows, c.line, cls=c.name, family="transformer", extra={"method": "()"}
    )
    return rows.tainted(frozenset({idx}))


BY_NAME: dict[str, Handler] = {
    **dict.fromkeys(SCALE_FUNCTIONS, _scale_function),
    "train_test_split": _tts,
    **dict.fromkeys(CV_CALLS, _cross_val),
    "enumerate": _enumerate,
    **dict.fromkeys(JOINS, _join),
    "resample": _resample,
    **dict.fromkeys(CALLBACKS, _callback),
    **dict.fromkeys(SCORE_FUNCS, _select),
    "train": _booster_train,
}


# ---- by the shape of the call --------------------------------------------------------
def _family(c: Call) -> str | None:
    fam = family_of(c.name)
    if fam is None and MODELS.search(c.name) and c.name[:1].isupper():
        fam = "model"
    return fam


def _is_constructor(c: Call) -> bool:
    return _family(c) is not None and not _on_value(c.flow, c.e.func)


def _construct(c: Call) -> Val:
    fam = _family(c)
    inner = c.args[0] if c.args else c.kw.get("estimator")
    stops = "early_stopping_rounds" in c.kw or bool(c.literal("early_stopping"))
    items = (inner,) if fam == "search" and inner is not None else ()
    return Val(
        "estimator",
        cls=c.name,
        family=None if fam == "model" else fam,
        items=items,
        stops=stops,
    )


def _is_reader(c: Call) -> bool:
    return bool(READERS.match(c.name)) and not _on_value(c.flow, c.e.func, known=True)


def _read(c: Call) -> Val:
    role = ALL
    for a in c.e.args[:1]:
        if isinstance(a, ast.Constant) and isinstance(a.value, str):
            stem = re.split(r"[/\\]", a.value)[-1].split(".")[0]
            named = name_role(stem)
            role = named if named in HELDOUT else ALL
    site = f"src@{c.site()}"
    trail = (f"{dotted(c.e.func)}(...) at line {c.line}: all rows",)
    return Val("rows", role, prov=(site,), trail=trail, cls="reader")


def _is_passthrough(c: Call) -> bool:
    return c.name in PASSTHROUGH and not _on_value(c.flow, c.e.func)


def _passthrough(c: Call) -> Val | None:
    rows = rows_of([*c.args, *c.kw.values()])
    return replace(rows[0], cls="") if rows else None


def _is_metric(c: Call) -> bool:
    if c.name in CV_CALLS or c.name in SCORE_FUNCS or _on_value(c.flow, c.e.func):
        return False
    return bool(re.search(r"(_score|_error|_loss|^score)$", c.name)) or c.name in (
        "log_loss",
        "r2_score",
    )


def _metric(c: Call) -> Val:
    return c.flow.score_of([*c.args, *c.kw.values()], c.line)


def _is_module_call(c: Call) -> bool:
    return isinstance(c.e.func, ast.Attribute) and dotted(c.e.func.value) in MODULES


def _module_call(c: Call) -> Val | None:
    """``np.mean(X, axis=0)`` is a statistic; ``np.log1p(X)`` keeps the rows; ``np.mean`` of
    scores is a score."""
    source = next((a for a in c.args if a is not None and a.kind == "rows"), None)
    if source is not None and c.name in REDUCTIONS:
        return Val("stat", source.role, source.prov, source.trail, columns=source.columns)
    taint = c.flow.stat_use(c.args, c.line, c.args)
    if source is not None:
        return source.tainted(taint)
    return next((a for a in c.args if a is not None and a.kind in ("score", "stat")), None)


SHAPES: list[tuple[Callable[[Call], bool], Handler]] = [
    (_is_constructor, _construct),
    (_is_reader, _read),
    (_is_passthrough, _passthrough),
    (_is_metric, _metric),
    (_is_module_call, _module_call),
]


# ---- methods -------------------------------------------------------------------------
def _method(c: Call) -> Val | None:
    assert isinstance(c.e.func, ast.Attribute)
    owner = c.flow.ev(c.e.func.value)
    kind = owner.kind if owner is not None else None
    if kind == "estimator":
        handler = ESTIMATOR_METHODS.get(c.name)
        return handler(c, owner) if handler and owner else None
    if kind == "rows" and owner is not None:
        out = ROWS_METHODS.get(c.name, _rows_apply)(c, owner)
        if c.flag("inplace"):
            _taint_root(c, out)
        return out
    if kind in ("stat", "score"):
        return owner
    handler = OTHER_METHODS.get(c.name)
    return handler(c, owner) if handler else None


def _taint_root(c: Call, out: Val | None) -> None:
    assert isinstance(c.e.func, ast.Attribute)
    name = root_name(c.e.func.value)
    old = c.flow.env.get(name) if name else None
    if name and old is not None and out is not None:
        c.flow.env[name] = old.tainted(out.taint)


def _update(c: Call, est: Val) -> None:
    """``scaler.fit(X)`` as a statement changes ``scaler``."""
    assert isinstance(c.e.func, ast.Attribute)
    if isinstance(c.e.func.value, ast.Name) and c.e.func.value.id in c.flow.env:
        c.flow.env[c.e.func.value.id] = est


def _split(c: Call, est: Val) -> Val | None:
    if est.family != "splitter" or c.flow.unit is None:
        return None
    x = c.x
    if x is not None and x.kind == "rows":
        c.flow.add_split(Split(c.flow.unit, c.line, f"{est.cls}().split", x.prov, cv=True), x)
    return Val("folds", cls=f"K@{c.site()}")


def _fit(c: Call, est: Val) -> Val | None:
    x = c.x
    rows = x if x is not None and x.kind == "rows" else None
    y = c.args[1] if len(c.args) > 1 else c.kw.get("y")
    taint: frozenset[int] = frozenset()
    if rows is not None:
        idx = c.flow.event(
            "fit",
            rows,
            c.line,
            cls=est.cls,
            family=est.family,
            supervised=y is not None,
            extra={"method": c.name},
        )
        if est.family in ("transformer", "selector", "sampler", "harmless"):
            taint = frozenset({idx})
    if est.family in (None, "pipeline", "search"):
        c.flow.model_fit(rows, est, y=y)
        _early_stop(c, est, [])
    if est.family == "search" and rows is not None and c.flow.unit is not None:
        c.flow.splits.append(Split(c.flow.unit, c.line, est.cls, rows.prov, cv=True))
    fitted = est.tainted(taint | (rows.taint if rows else frozenset()))
    if c.name == "fit":
        _update(c, fitted)
        return fitted
    _update(c, fitted)
    out = rows.tainted(taint) if rows is not None else None
    if c.name in ("fit_resample", "fit_sample"):
        return Val("tuple", items=(out, y))
    return out


def _apply(c: Call, est: Val) -> Val | None:
    x = c.x
    return x.tainted(est.taint) if x is not None and x.kind == "rows" else None


def _score_method(c: Call, est: Val) -> Val:
    return c.flow.score_of(c.args[:2], c.line)


ESTIMATOR_METHODS: dict[str, Callable[[Call, Val], Val | None]] = {
    "split": _split,
    **dict.fromkeys(FITS, _fit),
    **dict.fromkeys(APPLIES, _apply),
    "score": _score_method,
    "evaluate": _score_method,
}


def _early_stop(c: Call, est: Val | None, extra: list[Val | None]) -> None:
    """Early stopping or a best-model checkpoint watching held-out test rows chooses the
    number of rounds on them."""
    watched = [c.kw.get(k) for k in ("eval_set", "validation_data", "evals", "valid_sets")]
    rows = rows_of([*watched, *extra])
    if not any(r.role == TEST for r in rows):
        return
    stops = (est is not None and est.stops) or "early_stopping_rounds" in c.kw
    stops = stops or _has_callback(c.kw.get("callbacks"))
    if stops:
        c.flow.event("early_stop", Val("rows", TEST), c.line, cls=est.cls if est else c.name)


def _has_callback(v: Val | None) -> bool:
    if v is None:
        return False
    if v.kind == "callback":
        return True
    return v.kind == "tuple" and any(_has_callback(i) for i in v.items)


def _reduce(c: Call, rows: Val) -> Val:
    return Val("stat", rows.role, rows.prov, rows.trail, columns=rows.columns)


def _corr(c: Call, rows: Val) -> Val:
    """A correlation is looked at; it becomes a selection only when columns are chosen by it
    (the subscript carries its event to the model)."""
    idx = c.flow.event("corr", rows, c.line, cls=f".{c.name}()", supervised=True)
    return Val("stat", rows.role, rows.prov, rows.trail, taint=frozenset({idx}))


def _sample(c: Call, rows: Val) -> Val | None:
    """``df.sample(frac=1)`` shuffles (the same rows); with ``replace=True`` it duplicates
    rows; a fraction below one is the first part of a split (the rest via ``drop``)."""
    if c.flag("replace"):
        idx = c.flow.event("resample", rows, c.line, cls="DataFrame.sample(replace=True)")
        return rows.tainted(frozenset({idx}))
    frac = c.literal("frac")
    if frac == 1 or (frac is None and not c.args and "n" not in c.kw):
        return rows
    role = VALID if rows.role == TRAIN else TRAIN
    return c.flow.part(rows, role, f"D@{c.site()}:a", c.line, "df.sample")


def _drop(c: Call, rows: Val) -> Val | None:
    by = (
        c.e.args[0] if c.e.args else next((k.value for k in c.e.keywords if k.arg == "index"), None)
    )
    if isinstance(by, ast.Attribute) and by.attr == "index":
        other = c.flow.ev(by.value)
        if other is not None and other.kind == "rows" and other.prov[:-1] == rows.prov:
            side = other.prov[-1][:-1] + "b" if other.prov else "drop"
            role = TEST if other.role == TRAIN else TRAIN
            return c.flow.part(rows, role, side, c.line, "df.drop(part.index)")
    taint = frozenset().union(*(a.taint for a in _stats_of(c)))
    c.flow.applied |= taint
    return rows.tainted(taint)


def _stats_of(c: Call) -> list[Val]:
    return [a for a in [*c.args, *c.kw.values()] if a is not None and a.kind == "stat"]


def _query(c: Call, rows: Val) -> Val | None:
    if c.e.args and isinstance(c.e.args[0], ast.Constant):
        text = str(c.e.args[0].value).lower()
        for role, words in (
            (TRAIN, ("train", "training")),
            (VALID, ("valid", "val", "validation")),
            (TEST, ("test", "holdout")),
        ):
            if any(re.search(rf"['\"]{w}['\"]", text) for w in words):
                part = TEST if "!=" in text and role == TRAIN else role
                return c.flow.part(rows, part, f"Q@{c.site()}:{part}", c.line, "df.query")
    return rows


def _groupby(c: Call, rows: Val) -> Val:
    """A grouped statistic (``df.groupby("city")["y"].transform("mean")``): a statistic of the
    rows, naming the column it aggregates once subscripted."""
    return Val("stat", rows.role, rows.prov, rows.trail, cls="groupby")


def _rows_apply(c: Call, rows: Val) -> Val | None:
    """Any other method of rows (fillna, clip, where, replace, ...): a statistic among its
    arguments is applied to the rows."""
    taint = c.flow.stat_use([rows, *c.args, *c.kw.values()], c.line, [rows])
    if c.name in ("value_counts", "nunique", "count", "isna", "isnull", "head"):
        return None
    return rows.tainted(taint)


ROWS_METHODS: dict[str, Callable[[Call, Val], Val | None]] = {
    **dict.fromkeys(REDUCTIONS, _reduce),
    "corr": _corr,
    "corrwith": _corr,
    "sample": _sample,
    "drop": _drop,
    "query": _query,
    "groupby": _groupby,
}


def _append(c: Call, owner: Val | None) -> None:
    """``scores.append(acc)``: the list now holds scores made in this loop."""
    assert isinstance(c.e.func, ast.Attribute)
    got = next((a for a in c.args if a is not None and a.kind == "score"), None)
    name = root_name(c.e.func.value)
    if got is not None and name:
        c.flow.env[name] = replace(got, loop=c.flow.loops[-1] if c.flow.loops else got.loop)


def _unknown_fit(c: Call, owner: Val | None) -> Val | None:
    """A model the tables do not know (Keras, a booster object): trained on its first rows."""
    rows = rows_of(c.args[:1])
    if rows:
        c.flow.model_fit(rows[0], y=c.args[1] if len(c.args) > 1 else c.kw.get("y"))
        _early_stop(c, None, [])
    return None


def _unknown_evaluate(c: Call, owner: Val | None) -> Val | None:
    return c.flow.score_of(c.args[:2], c.line) if rows_of(c.args[:2]) else None


def _unknown_predict(c: Call, owner: Val | None) -> Val | None:
    rows = rows_of(c.args[:1])
    return rows[0] if rows else None


OTHER_METHODS: dict[str, Callable[[Call, Val | None], Val | None]] = {
    "append": _append,
    "fit": _unknown_fit,
    "evaluate": _unknown_evaluate,
    "score": _unknown_evaluate,
    "predict": _unknown_predict,
    "predict_proba": _unknown_predict,
}
