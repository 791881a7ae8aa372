"""The public face: ``import loadcore`` gives a script the calls it needs, each documented."""

from __future__ import annotations

import inspect
import re
import subprocess
import sys
from pathlib import Path

import loadcore

REPO = Path(__file__).resolve().parent.parent


def test_every_public_name_loads_and_has_a_numpy_style_docstring():
    for name in loadcore.__all__:
        if name == "__version__":
            continue
        obj = getattr(loadcore, name)
        doc = inspect.getdoc(obj) or ""
        assert doc, name
        takes_arguments = callable(obj) and len(inspect.signature(obj).parameters) > 0
        if takes_arguments:
            assert "Parameters\n----------" in doc, f"{name} has no Parameters section"


def test_import_loadcore_is_light():
    """Importing the package alone does not load the model, pandas or statsmodels."""
    code = (
        "import sys, loadcore; "
        "print(int(any(m.startswith(('statsmodels', 'pandas', 'loadcore.model')) "
        "for m in sys.modules)))"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO)
    assert done.stdout.strip() == "0", done.stdout + done.stderr


def test_the_readme_python_example_runs(tmp_path):
    """The README's "Use it from Python" block, run as written from the repository folder."""
    text = (REPO / "README.md").read_text(encoding="utf-8")
    section = text.split("## Use it from Python", 1)[1]
    code = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, cwd=REPO, timeout=600
    )
    assert done.returncode == 0, done.stderr
    assert "Error model:" in done.stdout and "MAPE" in done.stdout
    assert "temperature_c" in done.stdout
