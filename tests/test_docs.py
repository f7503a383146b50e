"""The README documents every command and holds exactly the two set-up commands."""

import re
from pathlib import Path

from featureaudit.cli import app
from featureaudit.kinds import KIND_TABLE, KINDS
from featureaudit.report import CAUTION

README = (Path(__file__).resolve().parents[1] / "README.md").read_text()
DEVELOPERS = (Path(__file__).resolve().parents[1] / "DEVELOPERS.md").read_text()


def test_every_command_is_documented():
    import typer.main

    commands = typer.main.get_command(app).commands
    for name in commands:
        if name != "version":
            assert f"featureaudit {name}" in README, name


def test_setup_section_has_two_commands():
    setup = README.split("## Set up", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```bash\n(.*?)```", setup, re.S)
    assert len(blocks) == 2 and all(b.strip().count("\n") == 0 for b in blocks)
    assert "featureaudit demo" in blocks[0] and "pytest" in blocks[1] and "[test]" in blocks[1]


def test_every_kind_and_the_caution_are_documented():
    for kind in KINDS:
        assert f"`{kind}`" in README, kind
    flat = " ".join(DEVELOPERS.replace("> ", "").split())
    assert " ".join(CAUTION.split()) in flat
    assert " ".join(CAUTION.split()) in " ".join(README.split())


def test_the_readme_kinds_table_is_the_kinds_table():
    rows = re.findall(r"^\| `([a-z_]+)` \| (.+?) \|$", README, re.M)
    table = {name: meaning for name, meaning in rows if name in KINDS}
    assert table == {k.name: k.meaning for k in KIND_TABLE}
    order = [name for name, _ in rows if name in KINDS]
    assert order == list(KINDS)
