"""Nothing in the program turns file content into code: no pickle, eval or exec anywhere.

A cell file, a recovery file or a report comes from anyone. Python's own
documentation warns: "The pickle module is not secure. Only unpickle data you
trust" (Python 3 library reference, pickle), and eval/exec run arbitrary code
(library reference, built-in functions). The package is scanned as syntax trees, so
a comment or a string that mentions these names does not count, and every way of
reaching them by name does.
"""

from __future__ import annotations

import ast
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
PACKAGES = ("kinematics", "app")

#: Modules that rebuild objects (and so run code) from bytes.
UNSAFE_MODULES = {
    "pickle",
    "cPickle",
    "_pickle",
    "marshal",
    "shelve",
    "dill",
    "cloudpickle",
    "jsonpickle",
    "joblib",
}
#: Built-ins that run code given as text.
UNSAFE_BUILTINS = {"eval", "exec", "compile", "__import__", "execfile"}
#: Calls of well-known libraries that unpickle.
UNSAFE_ATTRIBUTES = {"read_pickle", "loads_pickle", "unsafe_load", "full_load"}


def findings(source: str, name: str) -> list[str]:
    """Every use of an unsafe module, built-in or option in ``source``."""
    out = []
    for node in ast.walk(ast.parse(source, name)):
        where = f"{name}:{getattr(node, 'lineno', 0)}"
        if isinstance(node, ast.Import):
            out += [
                f"{where} import {a.name}"
                for a in node.names
                if a.name.split(".")[0] in UNSAFE_MODULES
            ]
        elif isinstance(node, ast.ImportFrom):
            if (node.module or "").split(".")[0] in UNSAFE_MODULES:
                out.append(f"{where} from {node.module} import")
        elif isinstance(node, ast.Name) and node.id in UNSAFE_BUILTINS:
            out.append(f"{where} {node.id}")
        elif isinstance(node, ast.Attribute):
            owner = node.value.id if isinstance(node.value, ast.Name) else ""
            # Qt's dialog.exec() and re.compile() are not the built-ins; builtins.exec is.
            if node.attr in UNSAFE_BUILTINS and owner in ("builtins", "__builtins__"):
                out.append(f"{where} {owner}.{node.attr}")
            if node.attr in UNSAFE_ATTRIBUTES:
                out.append(f"{where} .{node.attr}")
            if node.attr == "load" and isinstance(node.value, ast.Name) and node.value.id == "yaml":
                out.append(f"{where} yaml.load")
        elif isinstance(node, ast.keyword) and node.arg == "allow_pickle":
            out.append(f"{where} allow_pickle=")
        elif isinstance(node, ast.Constant) and node.value in UNSAFE_MODULES | UNSAFE_BUILTINS:
            # importlib.import_module("pickle"), getattr(builtins, "eval")
            out.append(f"{where} {node.value!r}")
    return out


def test_the_scan_finds_each_way_in():
    samples = [
        "import pickle",
        "from marshal import loads",
        "x = eval(text)",
        "exec(code)",
        "import builtins\nbuiltins.exec(c)",
        "import numpy as np\nnp.load(f, allow_pickle=True)",
        "import importlib\nimportlib.import_module('pickle')",
        "import yaml\nyaml.load(s)",
        "import pandas\npandas.read_pickle(p)",
        "f = compile(src, 'x', 'exec')",
    ]
    for text in samples:
        assert findings(text, "sample"), text
    # Safe look-alikes are not flagged.
    assert (
        findings("import json\njson.loads(s)\n# eval(x) in a comment\ns = 'evaluate'", "ok") == []
    )


def test_no_package_module_unpickles_evaluates_or_executes():
    files = sorted(p for pkg in PACKAGES for p in (REPO / pkg).rglob("*.py"))
    assert len(files) > 20  # the scan really looks at the package
    found = [
        f for p in files for f in findings(p.read_text(encoding="utf-8"), str(p.relative_to(REPO)))
    ]
    assert found == []
