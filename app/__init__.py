"""Thermoplane's user-facing surfaces: the Dash dashboard, figures, command line and WSGI entry point."""
