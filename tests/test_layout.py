"""The engine's layout stays readable: no import cycle, no module past its size, engine never imports the dashboard.

Source of the rule: this project's DEVELOPERS.md ("Architecture"); the checks read the source
files with the standard library's ``ast`` (module-level imports only: a function-level import is
deferred and cannot form an import-time cycle).
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "src" / "tracescreen"


def _module_name(path: Path) -> str:
    parts = path.relative_to(PKG.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _modules() -> dict[str, Path]:
    return {_module_name(p): p for p in PKG.rglob("*.py")}


def _top_level_imports(path: Path, name: str, known: set[str]) -> set[str]:
    """Engine modules imported at module level by the module at ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    pkg = name if path.name == "__init__.py" else name.rpartition(".")[0]
    out: set[str] = set()
    for node in tree.body:
        if isinstance(node, ast.Import):
            targets = [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = pkg.split(".")
                anchor = anchor[: len(anchor) - (node.level - 1)]
                base = ".".join(anchor + ([base] if base else []))
            targets = [f"{base}.{a.name}" if f"{base}.{a.name}" in known else base for a in node.names]
        else:
            continue
        for t in targets:
            while t and t not in known:
                t = t.rpartition(".")[0]
            if t and t != name:
                out.add(t)
    return out


def _graph() -> dict[str, set[str]]:
    mods = _modules()
    known = set(mods)
    return {m: _top_level_imports(p, m, known) for m, p in mods.items()}


def _find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    state: dict[str, int] = {}
    stack: list[str] = []

    def visit(m: str) -> list[str] | None:
        state[m] = 1
        stack.append(m)
        for n in sorted(graph.get(m, ())):
            if state.get(n) == 1:
                return stack[stack.index(n):] + [n]
            if n not in state:
                found = visit(n)
                if found:
                    return found
        stack.pop()
        state[m] = 2
        return None

    for m in sorted(graph):
        if m not in state:
            found = visit(m)
            if found:
                return found
    return None


def test_cycle_finder_finds_a_cycle():
    """The checker itself bites: a two-module cycle and a three-module cycle are found (common practice)."""
    assert _find_cycle({"a": {"b"}, "b": {"a"}}) == ["a", "b", "a"]
    assert _find_cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": set()}) == ["a", "b", "c", "a"]
    assert _find_cycle({"a": {"b"}, "b": set()}) is None


def test_import_graph_sees_real_edges():
    """The graph is read right: a known import is present (screening.screen imports limits.load)."""
    g = _graph()
    assert "tracescreen.limits.load" in g["tracescreen.screening.screen"]
    assert "tracescreen.limits.schema" in g["tracescreen.limits.load"]


def test_no_import_cycle():
    cycle = _find_cycle(_graph())
    assert cycle is None, "import cycle: " + " -> ".join(cycle)


def test_engine_never_imports_dashboard():
    for path in PKG.rglob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = [a.name for a in node.names] if isinstance(node, ast.Import) else (
                [node.module or ""] if isinstance(node, ast.ImportFrom) else [])
            assert not any(n == "dashboard" or n.startswith("dashboard.") for n in names), path


def test_no_module_over_400_lines():
    """A module a newcomer can read: none over 400 lines in the engine or the dashboard (DEVELOPERS.md, "Layout rules")."""
    files = list(PKG.rglob("*.py")) + list((PKG.parents[1] / "dashboard").rglob("*.py"))
    long = {str(p.relative_to(PKG.parents[1])): len(p.read_text(encoding="utf-8").splitlines()) for p in files}
    assert len(long) > 50 and not {m: n for m, n in long.items() if n > 400}


def _readme_anchors(path: Path) -> set[str]:
    """GitHub's anchors of a Markdown file's headings (lower case, punctuation dropped, spaces to hyphens)."""
    import re

    anchors = set()
    for line in path.read_text(encoding="utf-8").splitlines():
        m = re.match(r"^#{1,6} (.+)$", line)
        if m:
            text = re.sub(r"[^\w\- ]", "", m.group(1).strip().lower())
            anchors.add(text.replace(" ", "-"))
    return anchors


def test_readme_anchors_cited_in_code_and_tests_exist():
    """Tests and modules cite rules by README anchors (README.md#...): each anchor is a README heading."""
    import re

    root = PKG.parents[1]
    anchors = _readme_anchors(root / "README.md")
    cited = {}
    for folder in ("src", "dashboard", "tests", "bench"):
        for p in (root / folder).rglob("*.py"):
            for a in re.findall(r"README\.md#([\w\-]+)", p.read_text(encoding="utf-8")):
                cited.setdefault(a, str(p.relative_to(root)))
    assert cited, "no README anchors cited"
    assert {a: f for a, f in cited.items() if a not in anchors} == {}


#: the first word after ``test_`` of a test file: an engine package, a top-level module, or the dashboard
TEST_PREFIXES = ("io", "limits", "screening", "statistics", "retest", "report", "store", "internal", "cli",
                 "dashboard", "pipeline", "vocabulary", "package", "layout", "lint")


def test_test_files_mirror_the_packages():
    """tests/test_<package>_<module>.py: a newcomer finds the tests of a module by its name (DEVELOPERS.md)."""
    tests = PKG.parents[1] / "tests"
    names = [p.stem for p in tests.glob("test_*.py")]
    stray = [n for n in names if n.split("_")[1] not in TEST_PREFIXES]
    assert names and stray == []
    for package in ("io", "limits", "screening", "statistics", "retest", "report", "store"):
        assert any(n.startswith(f"test_{package}_") for n in names), package


def test_cited_reference_keys_are_in_the_bibliography():
    """Docstrings cite sources by key ([Key]_); every key is an entry of docs/references.md (case-insensitive)."""
    import re

    root = PKG.parents[1]
    listed = {k.lower() for k in re.findall(r"\*\*\[([^\]]+)\]\*\*", (root / "docs" / "references.md").read_text(encoding="utf-8"))}
    cited = {}
    for folder in ("src", "dashboard"):
        for p in (root / folder).rglob("*.py"):
            for key in re.findall(r"\[([A-Za-z][\w\-]*)\]_", p.read_text(encoding="utf-8")):
                cited.setdefault(key.lower(), str(p.relative_to(root)))
    assert len(listed) > 20 and cited
    assert {k: f for k, f in cited.items() if k not in listed} == {}


def _architecture_names(text: str) -> set[str]:
    """Module paths named in DEVELOPERS.md's architecture tree (indented names; ``a.py, b.py`` lines name several)."""
    block = text.split("## Architecture", 1)[1].split("```")[1]
    named: set[str] = set()
    stack: list[tuple[int, str]] = []
    for line in block.splitlines():
        m = re.match(r"^( *)([\w./]+(?:, [\w./]+)*)(?:\s|$)", line)
        if not m or not all(n.endswith((".py", "/")) for n in m.group(2).split(", ")):
            continue
        indent, names = len(m.group(1)), m.group(2).split(", ")
        while stack and stack[-1][0] >= indent:
            stack.pop()
        prefix = "".join(folder for _, folder in stack)
        named.update(prefix + n for n in names)
        if len(names) == 1 and names[0].endswith("/"):
            stack.append((indent, names[0]))
    return named


def test_developers_guide_names_every_module():
    """One line per module in DEVELOPERS.md ("Architecture"): a newcomer finds where a rule lives from the
    file list, and a module added without its line fails here (source of the rule: this project's
    DEVELOPERS.md)."""
    root = PKG.parents[1]
    named = _architecture_names((root / "DEVELOPERS.md").read_text(encoding="utf-8"))
    modules = {p.relative_to(root).as_posix() for folder in (PKG, root / "dashboard") for p in folder.rglob("*.py")
               if p.name != "__init__.py"}
    missing = sorted(m for m in modules if m not in named)
    gone = sorted(n for n in named if n.endswith(".py") and n not in modules)
    assert not missing, f"modules without a line in DEVELOPERS.md's architecture tree: {missing}"
    assert not gone, f"DEVELOPERS.md names modules that are not there: {gone}"


def test_architecture_names_reads_nested_folders_and_lists():
    """The reader of the tree itself (a check that cannot pass by reading nothing)."""
    text = "## Architecture\n\n```\nsrc/pkg/    x\n  io/       y\n    a.py, b.py   z\n  c.py  w\n```\n"
    assert _architecture_names(text) == {"src/pkg/", "src/pkg/io/", "src/pkg/io/a.py", "src/pkg/io/b.py",
                                         "src/pkg/c.py"}
