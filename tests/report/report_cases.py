"""Paths and hostile names shared by the report tests (a uniquely named module: several test
folders have a conftest.py)."""
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "studies" / "demo_inverter.toml"
FANS = ROOT / "catalogs" / "fans"

#: Names that would run script if they reached the page as markup.
HOSTILE_DEVICE = "<script>alert(1)</script>"
HOSTILE_STUDY = "hostile </script><img src=x onerror=alert(2)> & co"
HOSTILE_FAN = "x<img src=y onerror=alert(3)>"
HOSTILE_FAN_NAME = "<b onmouseover=alert(4)>bold fan</b>"
