"""The documentation keeps up with the code: every command-line option is in the README's command reference,
every protocol field is in protocols/README.md, and every module is in DEVELOPERS.md's layout."""

import argparse
import re
from pathlib import Path

from stimlab.cli import build_parser
from stimlab.experiment.protocol import protocol_schema

ROOT = Path(__file__).parents[1]


def commands(parser, prefix=("stimlab",)):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from commands(sub, prefix + (name,))
    options = [o for a in parser._actions for o in a.option_strings if o.startswith("--") and o != "--help"]
    yield " ".join(prefix), options


def test_every_cli_option_is_documented_under_its_command():
    readme = (ROOT / "README.md").read_text()
    sections = dict(re.findall(r"^### (stimlab [a-z ]+)\n(.*?)(?=^### |\Z)", readme, flags=re.M | re.S))
    for command, options in commands(build_parser()):
        if command in ("stimlab", "stimlab display"):
            continue
        assert command in sections, f"README has no '### {command}' section"
        for option in options:
            assert option in sections[command], f"{command} {option} is not documented in the README"


def schema_fields(node, found):
    if isinstance(node, dict):
        for key, value in node.get("properties", {}).items():
            found.add(key)
            schema_fields(value, found)
        for value in node.values():
            schema_fields(value, found)
    elif isinstance(node, list):
        for value in node:
            schema_fields(value, found)
    return found


def test_every_protocol_field_is_documented():
    text = (ROOT / "protocols" / "README.md").read_text()
    for field in sorted(schema_fields(protocol_schema(), set())):
        assert f"`{field}`" in text, f"protocol field {field!r} is not documented in protocols/README.md"


def test_every_module_is_in_the_layout():
    """DEVELOPERS.md's layout names each subpackage and each of its modules, so a newcomer can find every file."""
    guide = (ROOT / "DEVELOPERS.md").read_text()
    layout = guide[guide.index("## Layout"):guide.index("## Glossary")]
    package = ROOT / "stimlab"
    for folder in sorted(p for p in package.iterdir() if (p / "__init__.py").exists() and p.name != "data"):
        assert f"{folder.name}/" in layout, folder.name
        for module in sorted(folder.glob("*.py")):
            if module.name != "__init__.py":
                assert re.search(rf"\b{re.escape(module.name)}\b", layout), f"{folder.name}/{module.name}"

