"""Where things are, for tests in any folder below tests/."""

from pathlib import Path

TESTS = Path(__file__).resolve().parent
ROOT = TESTS.parent
