"""The core imports without Textual: computation and data never depend on the screens."""

from __future__ import annotations

import importlib.util
import subprocess
import sys

#: Packages that must work for the command line, reports and sync without any UI.
CORE = (
    "inspectkit.model",
    "inspectkit.cautions",
    "inspectkit.engine",
    "inspectkit.store",
    "inspectkit.report",
    "inspectkit.plan",
    "inspectkit.sync",
    "inspectkit.walkdown",
    "inspectkit.site_states",
    "inspectkit.calculators",
    "inspectkit.earthing_jobs",
    "inspectkit.earthing_input",
    "inspectkit.earthing_values",
)


def test_core_packages_import_without_textual() -> None:
    present = [name for name in CORE if importlib.util.find_spec(name) is not None]
    assert "inspectkit.engine" in present and "inspectkit.store" in present
    code = (
        "import importlib, pkgutil, sys\n"
        f"for name in {present!r}:\n"
        "    module = importlib.import_module(name)\n"
        "    for info in pkgutil.walk_packages(getattr(module, '__path__', []), name + '.'):\n"
        "        importlib.import_module(info.name)\n"
        "loaded = sorted(m for m in sys.modules if m == 'textual' or m.startswith('textual.'))\n"
        "print(','.join(loaded))\n"
    )
    run = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip() == "", f"textual imported by the core: {run.stdout.strip()}"
