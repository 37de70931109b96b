"""Imported by the server's fork server only: import the engine and the views and screen a small case
once, so that every worker process forked from it starts with the equations of state, the unit
registry, the plot's fonts and the report's templates already loaded (`runner.Runner`).

A failure here is left for the workers to meet again and report in their usual way.
"""

try:
    from screening.web import engine as _engine

    _engine.warm()
except Exception:  # noqa: BLE001  (a warm-up only: the workers do the real work and report its errors)
    pass
