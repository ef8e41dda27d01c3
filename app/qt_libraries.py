"""Before the window opens: is there a display, and are the system libraries Qt needs there?

PySide6's wheels bring Qt itself but not the X11/xcb and GL libraries of the system; Qt
aborts the process naming only the first one missing. :func:`missing_system_libraries`
asks ``ldd`` for all of them first, so ``zerotrace`` can name them in one line with the
packages that hold them. Plain functions, no Qt import.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence


def no_display() -> bool:
    """True on Linux when Qt would find no screen (it aborts the process then)."""
    import os

    if not sys.platform.startswith("linux") or os.environ.get("QT_QPA_PLATFORM"):
        return False
    return not (os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


# Shared libraries Qt's window needs from the system (PySide6's wheels bring Qt itself),
# with the Debian/Ubuntu package of each: the union of what `ldd` reports for the xcb
# platform plugin (plugins/platforms/libqxcb.so) and QtWidgets of PySide6 6.x.
QT_SYSTEM_LIBRARIES: dict[str, str] = {
    "libEGL.so.1": "libegl1",
    "libGL.so.1": "libgl1",
    "libGLX.so.0": "libglx0",
    "libGLdispatch.so.0": "libglvnd0",
    "libOpenGL.so.0": "libopengl0",
    "libfontconfig.so.1": "libfontconfig1",
    "libfreetype.so.6": "libfreetype6",
    "libdbus-1.so.3": "libdbus-1-3",
    "libglib-2.0.so.0": "libglib2.0-0",
    "libgthread-2.0.so.0": "libglib2.0-0",
    "libX11.so.6": "libx11-6",
    "libX11-xcb.so.1": "libx11-xcb1",
    "libxkbcommon.so.0": "libxkbcommon0",
    "libxkbcommon-x11.so.0": "libxkbcommon-x11-0",
    "libxcb.so.1": "libxcb1",
    "libxcb-cursor.so.0": "libxcb-cursor0",
    "libxcb-icccm.so.4": "libxcb-icccm4",
    "libxcb-image.so.0": "libxcb-image0",
    "libxcb-keysyms.so.1": "libxcb-keysyms1",
    "libxcb-randr.so.0": "libxcb-randr0",
    "libxcb-render.so.0": "libxcb-render0",
    "libxcb-render-util.so.0": "libxcb-render-util0",
    "libxcb-shape.so.0": "libxcb-shape0",
    "libxcb-shm.so.0": "libxcb-shm0",
    "libxcb-sync.so.1": "libxcb-sync1",
    "libxcb-util.so.1": "libxcb-util1",
    "libxcb-xfixes.so.0": "libxcb-xfixes0",
    "libxcb-xkb.so.1": "libxcb-xkb1",
}


def _qt_binaries() -> list[str]:
    """PySide6's QtWidgets module and the platform plugin Qt will load, found without
    importing PySide6 (an import with a missing library would fail with Qt's own words)."""
    import importlib.util
    import os
    from pathlib import Path

    spec = importlib.util.find_spec("PySide6")
    if spec is None or not spec.submodule_search_locations:
        return []
    root = Path(next(iter(spec.submodule_search_locations)))
    platform = (os.environ.get("QT_QPA_PLATFORM") or "").split(":")[0].strip()
    wayland = os.environ.get("WAYLAND_DISPLAY") and os.environ.get("XDG_SESSION_TYPE") == "wayland"
    if not platform and not wayland:
        platform = "xcb"  # Qt's choice on Linux outside a Wayland session
    candidates = [*root.glob("QtWidgets*.so")]
    if platform:
        candidates.append(root / "Qt" / "plugins" / "platforms" / f"libq{platform}.so")
    return [str(p) for p in candidates if p.is_file()]


def missing_system_libraries(binaries: Sequence[str] | None = None) -> list[str]:
    """Shared libraries that ``binaries`` (default: Qt's widgets and platform plugin) need
    and the system lacks, as ``ldd`` reports them ("name => not found"), sorted.

    Empty when nothing is missing, off Linux, or when ``ldd`` itself is unavailable
    (then Qt reports for itself).
    """
    import shutil
    import subprocess

    if not sys.platform.startswith("linux"):
        return []
    binaries = _qt_binaries() if binaries is None else list(binaries)
    ldd = shutil.which("ldd")
    if not binaries or ldd is None:
        return []
    try:
        out = subprocess.run([ldd, *binaries], capture_output=True, text=True, timeout=10,
                             check=False).stdout
    except (OSError, subprocess.SubprocessError):
        return []
    missing = {line.split("=>")[0].strip() for line in out.splitlines()
               if "=>" in line and line.split("=>")[1].strip() == "not found"}
    return sorted(missing)


def missing_libraries_message(missing: Sequence[str]) -> str:
    """One line naming the missing libraries and the Debian/Ubuntu packages that hold them."""
    packages = sorted({QT_SYSTEM_LIBRARIES[m] for m in missing if m in QT_SYSTEM_LIBRARIES})
    hint = f" (Debian/Ubuntu: apt-get install {' '.join(packages)})" if packages else ""
    return (f"error: zerotrace: the window needs system libraries that are missing: "
            f"{', '.join(missing)}{hint}; 'zerotrace solve', 'scan' and 'report' work "
            f"without them")
