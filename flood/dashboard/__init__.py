"""The browser dashboard of flood (Dash). The engine (``flood.*``) never imports this package.

``create_app()`` builds a Dash app; ``app.py`` at the repository root serves it.
"""

from __future__ import annotations

from pathlib import Path

ASSETS = Path(__file__).resolve().parents[2] / "assets"


def create_app(background_cache_dir: str | None = None):
    """Build the dashboard app (layout with the demo scenario and every callback).

    Parameters
    ----------
    background_cache_dir : str, optional
        Folder of the diskcache used by background callbacks (every web worker must share it);
        default ``$FLOOD_CACHE_DIR`` or a folder under the system temporary directory.

    Returns
    -------
    dash.Dash
    """
    from dash import Dash

    from . import callbacks, layout

    app = Dash(__name__, title="flood: waterflood screening", assets_folder=str(ASSETS),
               update_title=None, serve_locally=True)
    app.layout = layout.build_layout
    callbacks.register(app)
    return app
