"""Generate the demo scenario: invoices of an invented wholesale food supplier.

The supplier wants to predict, when an invoice is issued, whether it will be settled more
than 30 days after its due date. Honest features carry realistic, noisy signal; planted
leaks cover every kind featureaudit reports. Seeded: the same seed gives the same files.

    python sample_data/generate.py            # writes invoices.csv and dictionary.csv here
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

REGIONS = ["Northvale", "Southmere", "Eastbrook", "Westfold", "Harbourside"]
CHANNELS = ["web shop", "phone order", "field rep", "EDI link"]
CATEGORIES = ["dry goods", "chilled", "frozen", "beverages", "non-food"]
START = pd.Timestamp("2024-01-01")
DAYS = 730


def generate(n_invoices: int = 20_000, n_customers: int = 900, seed: int = 7) -> pd.DataFrame:
    """Return the invoice table, leaks included (see the dictionary for which is which)."""
    rng = np.random.default_rng(seed)
    risk = rng.normal(0, 1, n_customers)  # latent payment discipline
    since = START - pd.to_timedelta(rng.integers(30, 3650, n_customers), unit="D")
    size = rng.lognormal(0, 0.8, n_customers)  # how much a customer buys
    region = rng.choice(REGIONS, n_customers, p=[0.25, 0.2, 0.2, 0.2, 0.15])
    channel_pref = rng.integers(0, len(CHANNELS), n_customers)
    weights = size / size.sum()
    cust = rng.choice(n_customers, n_invoices, p=weights)
    issued = START + pd.to_timedelta(np.sort(rng.uniform(0, DAYS, n_invoices)) * 86400, unit="s")
    issued = issued.floor("min")
    terms = rng.choice([14, 30, 45, 60], n_invoices, p=[0.2, 0.45, 0.2, 0.15])
    terms = np.where(risk[cust] > 1.2, np.minimum(terms, 30), terms)
    amount = np.round(rng.lognormal(6.3, 0.9, n_invoices) * (0.6 + 0.4 * size[cust]), 2)
    channel = np.where(
        rng.random(n_invoices) < 0.7, channel_pref[cust], rng.integers(0, len(CHANNELS), n_invoices)
    )
    category = rng.choice(CATEGORIES, n_invoices)
    discount = np.round(np.clip(rng.normal(3, 2, n_invoices) + 1.5 * (amount > 1500), 0, 15), 1)
    lines = 1 + rng.poisson(2 + amount / 600)
    weight_kg = np.round(amount / rng.uniform(3, 9, n_invoices), 1)
    season = np.sin(2 * np.pi * (issued.day_of_year.to_numpy() / 365.25))
    logit = (
        -2.35
        + 1.15 * risk[cust]
        + 0.012 * (terms - 30)
        + 0.25 * np.log1p(amount / 1000)
        + 0.35 * (channel == 1)
        - 0.25 * (channel == 3)
        + 0.2 * season
        + rng.normal(0, 0.6, n_invoices)
    )
    late = (rng.random(n_invoices) < 1 / (1 + np.exp(-logit))).astype(int)
    due = issued + pd.to_timedelta(terms, unit="D")
    delay_days = np.where(
        late == 1, rng.uniform(31, 120, n_invoices), rng.uniform(-12, 29, n_invoices)
    )
    settled = due + pd.to_timedelta(delay_days * 86400, unit="s")
    known = due + pd.Timedelta(days=30)  # the outcome is known 30 days after due

    frame = pd.DataFrame(
        {
            "invoice_id": [f"INV-{i:06d}" for i in range(1, n_invoices + 1)],
            "customer_id": [f"C{c:04d}" for c in cust],
            "issued_at": issued,
            "due_date": due.normalize(),
            "outcome_known_at": known.normalize(),
            "amount": amount,
            "payment_terms_days": terms,
            "customer_since": since[cust].normalize(),
            "customer_tenure_days": (issued.normalize() - since[cust]).days,
            "region": region[cust],
            "sales_channel": np.array(CHANNELS)[channel],
            "product_category": category,
            "discount_pct": discount,
            "order_lines": lines,
            "order_weight_kg": weight_kg,
            "late_over_30d": late,
        }
    )
    frame["prior_late_share"], frame["open_balance_at_issue"] = _history(
        cust, issued, known, settled, late, amount
    )
    credit = np.round(
        2000 + 9000 * size[cust] * np.exp(-0.35 * risk[cust]) + rng.normal(0, 800, n_invoices), -1
    )
    frame["credit_limit"] = credit
    # --- planted leaks -------------------------------------------------------------
    # recorded after the due date: reminders sent and the collections flag
    frame["reminders_sent"] = np.where(
        late == 1, rng.poisson(3.2, n_invoices), rng.poisson(0.35, n_invoices)
    )
    frame["in_collections"] = np.where(
        late == 1, rng.random(n_invoices) < 0.62, rng.random(n_invoices) < 0.015
    ).astype(int)
    # last contact with the customer: for late invoices it is the dunning call after due
    contact = np.where(
        late == 1, rng.uniform(2, 45, n_invoices) + terms, -rng.uniform(1, 90, n_invoices)
    )
    frame["last_contact_at"] = (issued + pd.to_timedelta(contact * 86400, unit="s")).floor("h")
    # a random 80/20 split: customers land on both sides, periods overlap
    frame["split"] = np.where(rng.random(n_invoices) < 0.8, "train", "holdout")
    # re-issued invoices: held-out copies of training invoices under a new number
    train_idx = np.flatnonzero(frame["split"] == "train")
    copies = frame.iloc[rng.choice(train_idx, int(0.03 * n_invoices), replace=False)].copy()
    copies["split"] = "holdout"
    frame = pd.concat([frame, copies], ignore_index=True).sort_values("issued_at", kind="stable")
    frame["invoice_id"] = [f"INV-{i:06d}" for i in range(1, len(frame) + 1)]
    frame = frame.reset_index(drop=True)
    # preprocessing fitted on all rows, held-out rows included
    frame["amount_scaled"] = np.round(
        (frame["amount"] - frame["amount"].mean()) / frame["amount"].std(ddof=0), 6
    )
    missing = rng.random(len(frame)) < np.where(frame["customer_tenure_days"] < 400, 0.35, 0.08)
    credit = frame["credit_limit"].where(~missing)
    frame["credit_limit"] = credit.fillna(credit.median())
    order = [
        "invoice_id",
        "customer_id",
        "issued_at",
        "due_date",
        "outcome_known_at",
        "amount",
        "amount_scaled",
        "payment_terms_days",
        "customer_since",
        "customer_tenure_days",
        "prior_late_share",
        "open_balance_at_issue",
        "credit_limit",
        "region",
        "sales_channel",
        "product_category",
        "discount_pct",
        "order_lines",
        "order_weight_kg",
        "reminders_sent",
        "in_collections",
        "last_contact_at",
        "split",
        "late_over_30d",
    ]
    return frame[order]


def _history(
    cust: np.ndarray,
    issued: pd.DatetimeIndex,
    known: pd.DatetimeIndex,
    settled: pd.DatetimeIndex,
    late: np.ndarray,
    amount: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Per invoice, from the customer's earlier invoices only: share late, open balance."""
    share = np.full(len(cust), np.nan)
    balance = np.zeros(len(cust))
    t_issued = issued.to_numpy()
    t_known = known.to_numpy()
    t_settled = settled.to_numpy()
    for c in np.unique(cust):
        idx = np.flatnonzero(cust == c)  # already in issue order
        for pos, i in enumerate(idx):
            before = idx[:pos]
            done = before[t_known[before] < t_issued[i]]
            if done.size:
                share[i] = round(float(late[done].mean()), 4)
            balance[i] = round(float(amount[before][t_settled[before] > t_issued[i]].sum()), 2)
    return share, balance


DICTIONARY = [
    ("invoice_id", "id", "", "Invoice number, assigned in issue order."),
    ("customer_id", "entity", "", "The buying customer."),
    ("issued_at", "cutoff_time", "", "When the invoice was issued: the moment of prediction."),
    ("due_date", "feature", "issued_at", "Issue date plus payment terms; set at issue."),
    ("outcome_known_at", "label_time", "", "Due date plus 30 days: lateness is known then."),
    ("amount", "feature", "issued_at", "Invoice total in the supplier's currency."),
    ("amount_scaled", "feature", "issued_at", "Amount, standardised by the data team."),
    ("payment_terms_days", "feature", "issued_at", "Agreed payment terms."),
    ("customer_since", "feature", "issued_at", "Date the account was opened."),
    ("customer_tenure_days", "feature", "issued_at", "Days between account opening and issue."),
    (
        "prior_late_share",
        "feature",
        "issued_at",
        "Share of the customer's earlier invoices settled over 30 days late (outcomes known by "
        "issue); blank for a first invoice.",
    ),
    ("open_balance_at_issue", "feature", "issued_at", "Unpaid earlier invoices at issue."),
    ("credit_limit", "feature", "issued_at", "Credit limit; gaps filled by the data team."),
    ("region", "feature", "issued_at", "Sales region of the customer."),
    ("sales_channel", "feature", "issued_at", "How the order came in."),
    ("product_category", "feature", "issued_at", "Main category of the order."),
    ("discount_pct", "feature", "issued_at", "Discount granted on the invoice."),
    ("order_lines", "feature", "issued_at", "Number of lines on the invoice."),
    ("order_weight_kg", "feature", "issued_at", "Shipped weight."),
    ("reminders_sent", "feature", "0d", "Payment reminders sent, counted when the case closes."),
    ("in_collections", "feature", "0d", "1 if the invoice was handed to collections."),
    ("last_contact_at", "feature", "last_contact_at", "Latest logged contact with the customer."),
    ("split", "split", "", "train or holdout, assigned at random."),
    ("late_over_30d", "target", "", "1 if settled more than 30 days after the due date."),
]


def write(out: Path, seed: int = 7) -> None:
    frame = generate(seed=seed)
    frame.to_csv(
        out / "invoices.csv", index=False, float_format="%.6g", date_format="%Y-%m-%dT%H:%M:%S"
    )
    pd.DataFrame(DICTIONARY, columns=["column", "role", "known_at", "description"]).to_csv(
        out / "dictionary.csv", index=False
    )


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=Path(__file__).parent)
    parser.add_argument("--seed", type=int, default=7)
    args = parser.parse_args()
    write(args.out, args.seed)
