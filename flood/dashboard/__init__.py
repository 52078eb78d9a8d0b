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
    import functools

    from dash import Dash

    from . import callbacks, layout

    patterns = numerical_patterns()
    app = Dash(__name__, title="flood: waterflood screening", assets_folder=str(ASSETS),
               update_title=None, serve_locally=True)
    app.layout = functools.partial(layout.build_layout, patterns)
    callbacks.register(app)
    if patterns:
        callbacks.register_background(app, background_manager(background_cache_dir))
    return app


def numerical_patterns() -> tuple:
    """Pattern names of the numerical views, or () when ``flood.numerical`` is not installed."""
    try:
        from flood.areal_sweep import areal_sweep  # noqa: F401
        from flood.numerical.crosscheck import crosscheck_case  # noqa: F401
        from flood.numerical.pattern import PATTERNS
    except ImportError:
        return ()
    return tuple(PATTERNS)


def background_manager(cache_dir: str | None = None):
    """A DiskcacheManager on ``cache_dir`` (default $FLOOD_CACHE_DIR or <tmp>/flood-dash-cache).

    Every web worker (e.g. each gunicorn worker) must use the same folder: the job handles are
    signed with a secret kept in the cache.
    """
    import os
    import tempfile

    import diskcache
    from dash import DiskcacheManager

    folder = cache_dir or os.environ.get("FLOOD_CACHE_DIR") or os.path.join(tempfile.gettempdir(), "flood-dash-cache")
    return DiskcacheManager(diskcache.Cache(folder))
