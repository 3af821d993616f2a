"""The PostgreSQL fixture of the distributed tests (helpers live in dist_helpers.py)."""
from dist_helpers import pg_url  # noqa: F401  (a fixture)
