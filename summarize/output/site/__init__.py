"""The local review site: search, document pages with provenance, the comparison and
downloads, served read-only from one store (see app.py and server.py)."""
