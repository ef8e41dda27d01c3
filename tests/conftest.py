"""Test-wide setup: Qt runs offscreen, so the suite needs no screen."""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
