"""Where the app's static files live, in a source checkout and when installed."""

from __future__ import annotations

from importlib import resources
from pathlib import Path


def assets_dir() -> str:
    """The folder Dash serves as /assets: the package ``app.assets`` (the top-level assets/ folder)."""
    try:
        path = Path(str(resources.files("thermoplane.app.assets")))
        if (path / "thermoplane.css").exists():
            return str(path)
    except (ModuleNotFoundError, TypeError):
        pass
    return str(Path(__file__).resolve().parent.parent / "assets")
