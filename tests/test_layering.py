"""The core never imports Qt: a fresh interpreter imports poser.core and the
arm-file and command-line modules, then checks that no Qt module was loaded."""

import subprocess
import sys


def test_core_does_not_import_qt():
    code = (
        "import sys\n"
        "import poser.core, poser.core.fk, poser.core.jacobian, poser.core.dh, poser.armfile, poser.cli\n"
        "try:\n"
        "    import poser.core.ik\n"
        "except ImportError:\n"
        "    pass\n"
        "qt = ('PySide6', 'PyQt5', 'PyQt6', 'pyqtgraph', 'OpenGL')\n"
        "bad = sorted(m for m in sys.modules if m.split('.')[0] in qt)\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "", f"Qt/GL modules imported by the core: {out.stdout.strip()}"
