"""summary.md parses as intended: checked with markdown-it-py (a CommonMark parser with GFM
tables), for column names that hold Markdown's own characters."""

from __future__ import annotations

import pytest

from featureaudit.judge.findings import Findings
from featureaudit.render.markdown import md_code, md_text
from featureaudit.render.report import render_summary

markdown_it = pytest.importorskip("markdown_it")

HOSTILE = [
    "a|b",
    "tick`s",
    "``double``",
    "line\n# heading",
    "<script>x</script>",
    "fish & chips &amp;",
    "[link](http://example.com)",
    "*star* _under_",
    " padded ",
    "back\\slash|",
    "- item",
]


def _parser():
    # reference: markdown-it-py in CommonMark mode with the GFM table and strikethrough rules
    return markdown_it.MarkdownIt("commonmark").enable(["table", "strikethrough"])


def _column(name: str, level: str, remedy: str) -> dict:
    return {
        "column": name,
        "score": 0.9,
        "level": level,
        "kinds": ["target_proxy"],
        "summary": f"summary of {name} with | and <b>",
        "remedy": remedy,
        "impact": None,
        "accepted": None,
        "evidence": [],
    }


def _doc() -> Findings:
    columns = [_column(n, "high", "drop") for n in HOSTILE[:6]]
    columns += [_column(n, "medium", "refit_on_training_rows") for n in HOSTILE[6:]]
    split = {
        "probe": "twins",
        "statistic": "s",
        "value": 0.5,
        "threshold": 0.1,
        "level": "critical",
        "summary": "copies | <i>x</i> & more",
        "detail": {},
        "partitions": ["train", "test"],
    }
    kinds = ["duplicate_rows_across_split", "time_overlap_across_split"]
    return Findings(
        {
            "schema": "featureaudit.findings/3",
            "tool_version": "0.3.0",
            "created": "2026-12-01T12:00:00Z",
            "dataset": {
                "source": "t|able<1>.csv",
                "rows": 10,
                "train_rows": 8,
                "heldout_rows": 2,
                "target": "y`|",
                "task": "binary",
                "split": "column:split",
            },
            "settings": {"seed": 0},
            "columns": columns,
            "dataset_findings": [{**split, "kind": k} for k in kinds],
            "skipped": [{"probe": "timing", "column": "x\ny", "reason": "no <label> time"}],
            "warnings": [],
            "impact": None,
            "code_findings": [],
        }
    )


def _shown(name: str) -> str:
    """A name as its code span shows it: as droplist.txt writes it (names.quote_name)."""
    from featureaudit.vocab.names import quote_name

    return quote_name(name)


def _plain(inline) -> str:
    """What an inline token shows: its text and code, escapes resolved."""
    return "".join(c.content for c in inline.children if c.type in ("text", "code_inline"))


def _code_in(tokens) -> list[str]:
    return [c.content for t in tokens if t.children for c in t.children if c.type == "code_inline"]


def test_summary_headings_lists_and_table_rows_are_where_they_should_be():
    text = render_summary(_doc())
    tokens = _parser().parse(text)
    assert not [t for t in tokens if t.type in ("html_block", "html_inline")]
    inline = [c for t in tokens if t.children for c in t.children]
    assert not [c for c in inline if c.type in ("html_inline", "link_open", "image")]
    heads = [_plain(tokens[i + 1]) for i, t in enumerate(tokens) if t.type == "heading_open"]
    assert heads == [
        "featureaudit: t|able<1>.csv",
        "Drop list",
        "Refit list",
        "Suspect columns",
        "Split findings",
        "Not checked, or cannot tell",
    ]
    # each section's list items, in order, each holding one name in a code span
    sections: dict[str, list] = {}
    current = None
    for i, t in enumerate(tokens):
        if t.type == "heading_open":
            current = _plain(tokens[i + 1])
        elif t.type == "inline" and current and tokens[i - 2].type == "list_item_open":
            sections.setdefault(current, []).append(t)
    drops = [_code_in([t]) for t in sections["Drop list"]]
    assert drops == [[_shown(n)] for n in HOSTILE[:6]]
    assert [_code_in([t]) for t in sections["Refit list"]] == [[_shown(n)] for n in HOSTILE[6:]]
    assert len(sections["Split findings"]) == 2  # one item per finding, never run together
    assert _plain(sections["Split findings"][0]).endswith("copies | <i>x</i> & more")
    # the table: one body row per suspect, seven cells each, the name in the third
    rows, cells = [], []
    for i, t in enumerate(tokens):
        if t.type == "tr_open":
            cells = []
        elif t.type == "inline" and tokens[i - 1].type in ("td_open", "th_open"):
            cells.append(t)
        elif t.type == "tr_close":
            rows.append(cells)
    body = rows[1:]
    assert len(body) == len(HOSTILE) and all(len(r) == 7 for r in body)
    assert [_code_in([r[2]]) for r in body] == [[_shown(n)] for n in HOSTILE]
    want = [f"summary of {n.replace(chr(10), chr(92) + 'n')} with | and <b>" for n in HOSTILE]
    assert [_plain(r[4]) for r in body] == want


def test_code_spans_use_a_longer_fence_and_never_entities():
    md = _parser()
    for name in HOSTILE:
        html = md.render(f"x {md_code(name, cell=False)} y")
        inline = md.parse(f"x {md_code(name, cell=False)} y")[1].children
        spans = [c.content for c in inline if c.type == "code_inline"]
        assert spans == [_shown(name)], name
        assert "&amp;lt;" not in html
    # text outside code shows every character as written (backslash escapes, not entities)
    for name in HOSTILE:
        inline = md.parse(f"x {md_text(name)} y")[1].children
        shown = "x " + name.replace("\n", "\\n") + " y"
        assert "".join(c.content for c in inline if c.type == "text") == shown, name


def test_demo_like_summary_has_one_item_per_split_finding(tmp_path):
    # reference: markdown-it-py's bullet list tokens; two findings are two items
    text = render_summary(_doc())
    split = text.split("## Split findings", 1)[1].split("##", 1)[0]
    assert [line for line in split.splitlines() if line.startswith("- ")].__len__() == 2


def _any_name_doc(name: str) -> Findings:
    doc = _doc().document
    return Findings({**doc, "columns": [_column(name, "high", "drop")], "dataset_findings": []})


def test_any_column_name_round_trips_through_summary_md():
    """Property: whatever a column is called, every code span summary.md shows for it reads,
    by droplist.txt's rule (``names.unquote_name``), as the name itself, in the table and in
    the drop list alike."""
    from hypothesis import given, settings
    from hypothesis import strategies as st

    from featureaudit.vocab.names import unquote_name

    md = _parser()

    @settings(max_examples=150, deadline=None, derandomize=True)
    @given(st.text(min_size=1, max_size=12))
    def check(name):
        tokens = md.parse(render_summary(_any_name_doc(name)))
        spans = [s for s in _code_in(tokens) if unquote_name(s) == name]
        # the drop list and the suspects table each show the name once
        assert len(spans) >= 2, (name, _code_in(tokens))

    check()
