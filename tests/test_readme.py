"""The README's promises: one opening paragraph, exactly two set-up commands, and CI
running the very test command the README gives; its Python example runs."""

from __future__ import annotations

import re

from .conftest import PROJECT

README = (PROJECT / "README.md").read_text()


def setup_commands() -> list[str]:
    blocks = re.findall(r"```bash\n(.*?)```", README, flags=re.S)
    return [b.strip() for b in blocks]


def test_readme_opens_with_one_paragraph_then_two_commands():
    body = README.split("\n", 1)[1].strip()
    first_para, rest = body.split("\n\n", 1)
    assert "\n" not in first_para and len(first_para) > 200
    assert rest.index("```bash") < rest.index("## ")
    cmds = setup_commands()
    assert len(cmds) == 2
    assert "sqlstat run sample_data/" in cmds[0]
    assert "pytest" in cmds[1] and "[test" in cmds[1]


def test_ci_runs_the_readme_test_command():
    ci = (PROJECT / ".ci" / "run").read_text()
    assert setup_commands()[1] in ci


def test_demo_spec_named_in_readme_exists():
    path = re.search(r"sqlstat run (sample_data/\S+\.toml)", setup_commands()[0]).group(1)
    assert (PROJECT / path).is_file()
