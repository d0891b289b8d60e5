"""The bench page: a local web application where the technician checks parts.

- :mod:`speccheck.web.config`: what the server is started with (folders, key, access token).
- :mod:`speccheck.web.bench`: one bench session's work (part, traces, verdict, sign and record),
  calling the evaluation, report and records layers; nothing is computed here.
- :mod:`speccheck.web.security`: access token, CSRF tokens, upload limits.
- :mod:`speccheck.web.app`: the ASGI application (Starlette) and its routes.
- :mod:`speccheck.web.server`: starting it under uvicorn.

Starlette, uvicorn and python-multipart are imported only when the page is started.
"""
