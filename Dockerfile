# Thermoplane for a group: the dashboard behind gunicorn, as a non-root user on port 8050.
FROM python:3.11-slim

# NUMBA_CACHE_DIR: the compiled kernels live in the server user's home (the installed package is root's)
ENV PYTHONDONTWRITEBYTECODE=1 PYTHONUNBUFFERED=1 NUMBA_CACHE_DIR=/home/thermoplane/.numba-cache
WORKDIR /srv/thermoplane
COPY pyproject.toml README.md ./
COPY physics ./physics
COPY app ./app
COPY assets ./assets
RUN pip install --no-cache-dir . && useradd --create-home --uid 10001 thermoplane
USER thermoplane
# Compile the kernels now, as the server's user, into its cache: the server loads them at start
RUN python -c "from thermoplane.app.main import warm_up; print(f'kernels compiled in {warm_up():.1f} s')"
EXPOSE 8050
CMD ["gunicorn", "--preload", "--bind", "0.0.0.0:8050", "--workers", "2", "--timeout", "180", "thermoplane.app.wsgi:server"]
