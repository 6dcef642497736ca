"""WSGI entry point for a group server: ``gunicorn thermoplane.app.wsgi:server``."""

from .main import create_app, warm_up

app = create_app()
warm_up()          # kernels compiled once, before the first request (in the master with gunicorn --preload)
server = app.server
