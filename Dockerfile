# Thermoplane for a group: the dashboard behind gunicorn, as a non-root user on port 8050.
FROM python:3.11-slim

ENV PYTHONDONTWRITEBYTECODE=1 PYTHONUNBUFFERED=1
WORKDIR /srv/thermoplane
COPY pyproject.toml README.md ./
COPY physics ./physics
COPY app ./app
COPY assets ./assets
RUN pip install --no-cache-dir . && useradd --create-home --uid 10001 thermoplane
USER thermoplane
EXPOSE 8050
CMD ["gunicorn", "--preload", "--bind", "0.0.0.0:8050", "--workers", "2", "--timeout", "180", "thermoplane.app.wsgi:server"]
