"""WSGI entry point for a group server: ``gunicorn thermoplane.app.wsgi:server``."""

from .main import create_app

app = create_app()
server = app.server
