"""The in-app guide: what every panel does, the keys, and the cautions."""

from __future__ import annotations

from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout

CAUTIONS = [
    "Poser plans nothing for a real robot. It is a study and checking tool: it computes poses, "
    "it does not plan paths, check collisions or drive a controller.",
    "Verify every joint limit and every reach on the real controller before you rely on a number from Poser; "
    "the arm file may not match the robot as built.",
    "Keep out of the safeguarded space when jogging a real arm, and jog at reduced speed with an enabling device.",
    "Follow ISO 10218 (robot safety), your local codes and licensed practice for installing, teaching and running "
    "industrial robots.",
]

SECTIONS = [
    ("3D view",
     "The arm as solid bodies: round bars are links, teal drums are revolute (turning) joints, plum square "
     "sleeves are prismatic (sliding) joints; the thin dark line through each is the joint's axis. Triads show "
     "x (red), y (green), z (blue): 'base' and 'tool' always, every joint frame (F1, F2, …) with "
     "<i>Joint frames</i>. The floor grid's spacing is written above the view and on the floor. "
     "<i>Trail</i> draws the tool point's path; <i>Ghosts</i> shows IK branches as see-through arms. "
     "Mouse: left-drag orbits, middle-drag (or Ctrl + left-drag) pans, the wheel zooms. Keys in the view: "
     "F front, S side, T top, I isometric, A fit the arm."),
    ("Joints",
     "One row per joint: name, type, a slider over the joint's range, the value in the arm's units, the "
     "limits, a bar of the range and the joint's state in words. The bar and words turn amber within the "
     "warning margin (default 5 % of the range) and red at or beyond a limit. Arrow keys move the focused "
     "joint by the arrow-key step (Shift: ten steps; Page Up/Down: ten steps); revolute joints take the step in "
     "the arm's angle unit, prismatic joints their own step in its length unit. <i>Home</i> (Alt+H) and "
     "<i>Zero</i> (Alt+Z) set every joint at once."),
    ("Frames",
     "The tool pose in world coordinates as a 4×4 matrix, its position xyz and its roll, pitch, yaw about the "
     "fixed X, Y, Z axes. Pick a link to see A<sub>i</sub> (frame i−1 → frame i) and world → frame i. Each "
     "<i>Copy</i> button copies a matrix as plain text, a NumPy array literal or CSV. Translations are in the "
     "arm's length unit."),
    ("Target",
     "Type a tool pose: xyz and an orientation as roll-pitch-yaw, axis–angle or quaternion (w, x, y, z), or "
     "position only. Poser solves as you type and lists every branch with its label, whether it is within "
     "the joint limits, its worst violation, its manipulability and the largest joint move from the present "
     "pose. Hover a branch to see its ghost; select it and press <i>Apply branch</i> (or Enter, or double-click) "
     "to move the arm there. An unreachable target is explained: the closest approach, how far it is and the "
     "limit that blocks it."),
    ("Arm editor",
     "The arm's rows (DH parameters a, alpha, d, theta, limits min/max and home) with its name, units, "
     "convention, base and tool. Every edit is checked at once with the arm-file loader's own checks; an "
     "invalid edit is refused with the loader's message and the arm stays as it was. File ▸ Open, Save "
     "(Ctrl+S), Save As; saves are atomic and keep your comments. A recovery copy of unsaved edits is kept so a "
     "crash loses nothing; Poser offers it the next time you open the same file."),
    ("Status bar",
     "Manipulability and condition number of the pose with a warning near a singularity, joints near or at "
     "limits, the arm's name, units and file, and how the 3D view is drawn (or why the 2D three-view is shown)."),
    ("Keys",
     "Ctrl+1 … Ctrl+5 go to the 3D view, Joints, Frames, Target and Arm editor; Ctrl+O open, Ctrl+S save, "
     "Ctrl+Shift+S save as, Ctrl+Q quit, F1 this guide. Tab moves through every control."),
]


def guide_html() -> str:
    parts = ["<h2>Poser — a short guide</h2>"]
    for title, text in SECTIONS:
        parts.append(f"<h3>{title}</h3><p>{text}</p>")
    parts.append("<h3>Cautions</h3><ul>" + "".join(f"<li>{c}</li>" for c in CAUTIONS) + "</ul>")
    return "\n".join(parts)


class HelpDialog(QDialog):
    def __init__(self, parent=None, cautions_only: bool = False):
        super().__init__(parent)
        self.setWindowTitle("Poser — cautions" if cautions_only else "Poser — guide")
        self.resize(640, 560)
        self.browser = QTextBrowser(self)
        if cautions_only:
            self.browser.setHtml("<h2>Cautions</h2><ul>" + "".join(f"<li>{c}</li>" for c in CAUTIONS) + "</ul>")
        else:
            self.browser.setHtml(guide_html())
        box = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, self)
        box.rejected.connect(self.reject)
        lay = QVBoxLayout(self)
        lay.addWidget(self.browser)
        lay.addWidget(box)
