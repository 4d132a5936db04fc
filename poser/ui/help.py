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
     "The arm as solid bodies: round bars are links, teal drums are rotary (revolute, turning) joints, plum "
     "square sleeves are linear (prismatic, sliding) joints; the thin dark line through each is the joint's "
     "axis. Triads show "
     "x (red), y (green), z (blue): 'base' and 'tool' always, every joint frame (F1, F2, …) with "
     "<i>Joint frames</i>. The floor grid's spacing is written above the view and on the floor. "
     "<i>Trail</i> draws the tool point's path; <i>Ghosts</i> shows IK branches as see-through arms. "
     "Mouse: left-drag orbits, middle-drag (or Ctrl + left-drag) pans, the wheel zooms. Keys in the view: "
     "F front, S side, T top, I isometric, A fit the arm."),
    ("Joints",
     "One row per joint: name, a slider over the joint's range, the value in the arm's units and the limits; "
     "under the name the joint's type and unit (<i>rotary joint, deg</i>: a revolute joint that turns; "
     "<i>linear joint, mm</i>: a prismatic joint that slides), then a bar of the range and the joint's state "
     "in words. The bar, the value box and the words turn amber within the warning margin (<i>Warn within</i>, "
     "default 5 % of the range) and red at or beyond a limit. Arrow keys move the focused joint by the "
     "<i>Arrow step</i> (Shift or Page Up/Down: ten steps); rotary joints take the step in the arm's angle "
     "unit, linear joints their own step in its length unit. <i>Home</i> (Ctrl+H) and <i>Zero</i> (Ctrl+0) "
     "set every joint at once."),
    ("Frames",
     "The tool pose in world coordinates as a 4×4 matrix, its position xyz and its roll, pitch, yaw about the "
     "fixed X, Y, Z axes. Pick a link to see A<sub>i</sub> (frame i−1 → frame i) and world → frame i. Each "
     "<i>Copy</i> button copies a matrix as plain text, a NumPy array literal or CSV. Translations are in the "
     "arm's length unit."),
    ("Target",
     "Type a tool pose: xyz and an orientation as roll-pitch-yaw, axis–angle or quaternion (w, x, y, z), or "
     "position only. Poser solves as you type and lists every branch: its label; <i>limits</i>: yes, or NO "
     "with the joint furthest beyond a limit; <i>manip.</i>: its manipulability; and the largest single joint "
     "move from the present pose. Hover a branch to see its ghost and, under the list, everything about it "
     "(every violation, the condition number, which joint moves most); select it and press <i>Apply branch</i> "
     "(or Enter, or double-click) to move the arm there. An unreachable target is explained: the closest "
     "approach, how far it is and the limit that blocks it."),
    ("Manipulability and condition number",
     "Both say how far the pose is from a singularity, where the tool cannot move in some direction however "
     "the joints turn. Poser divides every length in the Jacobian by the arm's size (the sum of its link "
     "lengths and offsets), so both figures have no unit and read the same in mm, m or in. The "
     "<i>manipulability</i> (Yoshikawa's measure, normalised) is 0 at a singularity and larger the more "
     "freely the tool can move; compare it between poses of one arm. The <i>condition number</i> is 1 at "
     "best and grows without bound towards a singularity; above 80 Poser warns in the status bar and in the "
     "branch list. The status bar's tooltip also gives the raw manipulability in the arm's own units."),
    ("Arm editor",
     "The arm's rows (DH parameters a, alpha, d, theta, limits min/max and home) with its name, units, "
     "convention, base and tool. Every edit is checked at once with the arm-file loader's own checks; an "
     "invalid edit is refused with the loader's message and the arm stays as it was. File ▸ Open, Save "
     "(Ctrl+S), Save As; saves are atomic and keep your comments. A recovery copy of unsaved edits is kept so a "
     "crash loses nothing; Poser offers it the next time you open the same file."),
    ("Status bar",
     "The singularity verdict with the pose's condition number and manipulability, the joints near or at "
     "limits (worst first), the arm's name, units and file, and how the 3D view is drawn (or why the 2D "
     "three-view is shown). A text too long for the bar ends in … ; hover it to read it whole."),
    ("Keys",
     "Ctrl+1 … Ctrl+5 go to the 3D view, Joints, Frames, Target and Arm editor; Ctrl+O open, Ctrl+S save, "
     "Ctrl+Shift+S save as, Ctrl+Q quit, F1 this guide. Tab moves through every control."),
]


def guide_html() -> str:
    parts = ["<h2>Poser — a short guide</h2>",
             "<p><b>Poser plans nothing for a real robot.</b> Read the cautions at the end before you use a "
             "number from Poser on a real arm.</p>"]
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
