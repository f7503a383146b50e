"""`featureaudit dictionary` drafts: datetime columns offered as label/cutoff time candidates,
names that read like a record made after the outcome marked, and the draft reads back."""

import numpy as np
import pandas as pd

from featureaudit.load.dictionary import (
    add_suggestions,
    draft_dictionary,
    draft_suggestions,
    read_dictionary,
)


def _frame():
    rng = np.random.default_rng(0)
    n = 300
    start = pd.Timestamp("2025-01-01") + pd.to_timedelta(rng.integers(0, 200, n), "D")
    return pd.DataFrame(
        {
            "issued_at": start,
            "decided_at": (start + pd.Timedelta("45D")).astype(str),  # as read from a CSV
            "last_seen": start - pd.Timedelta("3D"),
            "amount": rng.gamma(2.0, 100.0, n),
            "reminders_sent": rng.integers(0, 4, n),
            "paidInFull": rng.integers(0, 2, n),
            "region": rng.choice(["north", "south"], n),
            "late": rng.integers(0, 2, n),
        }
    )


def test_time_candidates_and_post_outcome_names():
    notes = draft_suggestions(_frame(), target="late")
    assert notes["issued_at"].startswith("cutoff_time candidate")
    assert notes["decided_at"].startswith("label_time candidate")
    assert notes["last_seen"].startswith("datetime: a label_time or cutoff_time candidate")
    assert "reminder" in notes["reminders_sent"] and "after the outcome" in notes["reminders_sent"]
    assert "paid" in notes["paidInFull"]
    assert "amount" not in notes and "region" not in notes and "late" not in notes


def test_the_annotated_draft_reads_back(tmp_path):
    frame = _frame()
    text = add_suggestions(draft_dictionary(frame, target="late"), frame, target="late")
    path = tmp_path / "dictionary.csv"
    path.write_text(text)
    d = read_dictionary(path)
    assert set(d.entries) == set(frame.columns) and d.entries["late"].role == "target"
    assert d.extra_headers == ("suggestion",)
    assert "cutoff_time candidate" in d.entries["issued_at"].extra["suggestion"]
