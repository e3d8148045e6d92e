"""Shared helpers for the tests that drive the tidemark binary with outside clients.

The binary is taken from $TIDEMARK_BIN, else target/release/tidemark (what `.ci/run`
builds), else target/debug/tidemark. Hand-built fixtures are written by
`cargo test --test integration` into target/tmp/tidemark-fixtures/.
"""

import json
import os
import pathlib

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
FIXTURES = ROOT / "target" / "tmp" / "tidemark-fixtures"
SCHEMA = ROOT / "docs" / "schema" / "tidemark-check-1.schema.json"


def tidemark_bin() -> str:
    env = os.environ.get("TIDEMARK_BIN")
    if env:
        return env
    for profile in ("release", "debug"):
        p = ROOT / "target" / profile / "tidemark"
        if p.exists():
            return str(p)
    raise RuntimeError("tidemark binary not built: run `cargo build --release` first")


def fixture(name: str):
    """A hand-built fixture; missing means `cargo test --test integration` did not run."""
    path = FIXTURES / name
    if not path.exists():
        raise RuntimeError(f"{path} missing: run `cargo test --test integration` first")
    if name.endswith(".json"):
        return json.loads(path.read_text(encoding="utf-8"))
    return path.read_text(encoding="utf-8")


def utf16_units(s: str) -> int:
    """UTF-16 code units in s, counted by Python's own codec (not by tidemark)."""
    return len(s.encode("utf-16-le")) // 2


@pytest.fixture(scope="session")
def binary() -> str:
    return tidemark_bin()
