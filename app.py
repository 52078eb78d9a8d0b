"""Serve the flood dashboard: ``python app.py`` (http://127.0.0.1:8050) or ``gunicorn app:server``.

Options: ``--port N`` (or $FLOOD_PORT), ``--debug`` (or FLOOD_DEBUG=1). Binds to loopback only.
"""

import argparse
import os

from flood.dashboard import create_app

app = create_app()
server = app.server

if __name__ == "__main__":
    parser = argparse.ArgumentParser(description="Serve the flood dashboard on 127.0.0.1.")
    parser.add_argument("--port", type=int, default=int(os.environ.get("FLOOD_PORT", "8050")))
    parser.add_argument("--debug", action="store_true", default=os.environ.get("FLOOD_DEBUG") == "1")
    args = parser.parse_args()
    app.run(host="127.0.0.1", port=args.port, debug=args.debug)
