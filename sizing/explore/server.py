"""The local server of ``sizing explore``: Bokeh's server on 127.0.0.1, every asset served from here.

BokehJS and the page's styles come from the installed ``bokeh`` package
(the server's ``/static`` route); the page loads nothing from elsewhere, so it
works without a network. The websocket accepts only pages served by this
server (its own address as origin). Ctrl-C stops it cleanly.
"""
from __future__ import annotations

import signal
import socket
import sys
import threading
from functools import partial

from ..common.caution import CAUTION
from ..common.errors import InputError

DEFAULT_PORT = 5006


def free_port(address: str, port: int = 0) -> int:
    """``port`` (or, for 0, one the operating system picks) if it is free on ``address`` now;
    :class:`InputError` when it is taken."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        try:
            s.bind((address, port))
        except OSError as e:
            raise InputError(f"cannot listen on {address}:{port} ({e.strerror or e}); give another port with "
                             f"--port N (0 picks a free one)", field="--port") from None
        return s.getsockname()[1]


def _stop(_signum, _frame):
    raise KeyboardInterrupt     # SIGTERM stops the server the way Ctrl-C does


def serve(path, port=DEFAULT_PORT, address="127.0.0.1", say=print) -> int:
    """Serve the what-if page of a requirement file until Ctrl-C; returns the exit code (0)."""
    from bokeh.application import Application
    from bokeh.application.handlers.function import FunctionHandler
    from bokeh.server.server import Server

    from .engine import WORKER, Explorer
    from .page import make_document

    if not 0 <= port <= 65535:
        raise InputError(f"port {port} is not a TCP port (0 to 65535; 0 picks a free one)", field="--port")
    port = free_port(address, port)          # before the (slower) build: a taken port is said at once
    sys.setswitchinterval(0.001)             # a solve waits at most 1 ms for the follow-up thread's turn
    say(f"loading {path} and building its sizing problem…", flush=True)
    explorer = Explorer(path)
    origins = [f"{address}:{port}"] + ([f"localhost:{port}"] if address == "127.0.0.1" else [])
    try:
        server = Server({"/": Application(FunctionHandler(partial(make_document, explorer)))},
                        port=port, address=address, allow_websocket_origin=origins, num_procs=1)
    except OSError as e:
        raise InputError(f"cannot listen on {address}:{port} ({e.strerror or e}); give another port with "
                         f"--port N (0 picks a free one)", field="--port") from None
    server.start()
    main = threading.current_thread() is threading.main_thread()
    previous = signal.signal(signal.SIGTERM, _stop) if main else None
    n = len(explorer.controls)
    say(f"sizing explore: {explorer.spec.title}\n"
        f"  open http://{address}:{server.port}/ in a browser ({n} movable values; Ctrl-C stops the server)\n"
        f"{CAUTION}", flush=True)
    try:
        server.io_loop.start()
    except KeyboardInterrupt:
        say("\nstopping the explore server", flush=True)
    finally:
        if main:
            signal.signal(signal.SIGTERM, previous)
        server.stop()
        WORKER.shutdown(wait=False, cancel_futures=True)
    return 0
