"""`screening serve`: start the local page (uvicorn), with the warm worker pools, until Ctrl-C."""

from __future__ import annotations

import ipaddress
import signal
import sys
import threading
import time
import webbrowser

DEFAULT_HOST = "127.0.0.1"
DEFAULT_PORT = 8765


def is_loopback(host: str) -> bool:
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def url_of(host: str, port: int) -> str:
    shown = f"[{host}]" if ":" in host else host
    return f"http://{shown}:{port}/"


def _interrupted(signum, frame) -> None:
    """A termination signal taken as Ctrl-C (:func:`serve`)."""
    raise KeyboardInterrupt


def serve(host: str = DEFAULT_HOST, port: int = DEFAULT_PORT, open_browser: bool = False, out=None) -> int:
    """Run the server until interrupted; return the exit code."""
    import uvicorn

    from screening.web.app import create_app
    from screening.web.runner import Runner

    out = out or sys.stdout
    if not is_loopback(host):
        print(f"screening serve: warning: listening on {host}, not on this computer's loopback address: "
              "other machines on the network can reach this page and everything screened with it. "
              "Use --host only on a network you trust.", file=sys.stderr)
    t0 = time.perf_counter()
    runner = Runner()
    app = create_app(runner, host, port)
    config = uvicorn.Config(app, host=host, port=port, log_level="warning", access_log=False,
                            timeout_graceful_shutdown=3, server_header=False)
    server = uvicorn.Server(config)
    url = url_of(host, port)

    def announce():
        while not server.started and not server.should_exit:
            time.sleep(0.02)
        if server.started:
            print(f"screening: the page is at {url}  (listening after {time.perf_counter() - t0:.1f} s; "
                  "press Ctrl-C to stop)", file=out, flush=True)
            if open_browser:
                webbrowser.open(url)

    threading.Thread(target=announce, daemon=True).start()
    # A termination signal stops the page as Ctrl-C does: uvicorn shuts down on it, then raises it again once
    # it has restored the handler found here; the default one would end the process before the worker pools
    # are closed (leaving their processes behind), this one lets `finally` close them.
    previous = (signal.signal(signal.SIGTERM, _interrupted)
                if threading.current_thread() is threading.main_thread() else None)
    try:
        server.run()
    except KeyboardInterrupt:
        pass
    except SystemExit:  # uvicorn's answer to an address it cannot listen on (its message is printed)
        pass
    finally:
        runner.close()
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
    if not server.started:
        print(f"screening serve: error: could not listen on {host}:{port} (is another program using the port? "
              "try another --port; is the address this computer's?)", file=sys.stderr)
        return 2
    print("screening: stopped", file=out, flush=True)
    return 0
