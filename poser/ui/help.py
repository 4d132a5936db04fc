"""The in-app guide: what every panel does, the keys, and the cautions."""

from __future__ import annotations

from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout

CAUTIONS = [
    "Poser plans nothing for a real robot. It is a study and checking tool: it computes poses, "
    "it does not plan paths, check collisions or drive a controller.",
    "Verify every joint limit and every reach on the real controller before you rely on a number from Poser; "
    "the arm file may not match the robot as built.",
    "Studies (workspace, reach, placement, test cube) are not a plan for a real robot: they include joint limits, "
    "base and tool but no collisions between links, with the cell or with the work, no cable or payload limits, and "
    "sampled figures carry the error they state. Verify every study result on the robot's controller before it "
    "moves.",
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
     "<i>Trail</i> draws the tool point's path; <i>Ghosts</i> shows IK branches as ghost arms carrying their "
     "row numbers (the list's #): see-through bodies within the limits, dashed lines beyond them; the hovered "
     "or selected row's ghost is drawn strong, look-alikes (a joint a whole turn apart) share one ghost and "
     "its numbers ('1–6'). An unreachable target shows the nearest reachable point as an amber ball with a "
     "dashed line to the target. Parts of the arm below the floor or behind a wall or ceiling mount are "
     "drawn red with their depth. The small X, Y, Z axes in the corner turn with the camera. "
     "Mouse: left-drag orbits, middle-drag (or Ctrl + left-drag) pans, the wheel zooms (Ctrl + wheel in finer "
     "steps). Keys in the view: F front, S side, T top, I isometric, A fit the arm, O orthographic projection "
     "(again for perspective: Front, Side and Top true to scale), arrow keys orbit (Shift: in bigger steps), "
     "+ and − zoom. A target typed out of sight brings itself into the view."),
    ("Mounting and 'up'",
     "'Up' is the arm's base frame z axis: away from the surface the arm is mounted on. For a floor-mounted arm "
     "that is the world's up; for an arm on a wall or hanging from a ceiling (a base turned by the arm file's "
     "[base] rpy) it points out of the wall or down from the ceiling, and 'shoulder front', 'elbow up' and the "
     "mounting plane are meant in that frame. The mounting plane is the base frame's x-y plane: when a point of "
     "the arm or tool goes below the floor or behind its wall or ceiling, the status bar says so in red (BELOW "
     "THE FLOOR, BEHIND THE MOUNTING SURFACE) with the part and its depth — a real arm would hit it there. An "
     "arm on a riser is also marked amber in the 3D view where it reaches below the riser's top."),
    ("Joints",
     "One row per joint: name, a slider over the joint's range, the value in the arm's units and the limits; "
     "under the name the joint's type and unit (<i>rotary joint, deg</i>: a revolute joint that turns; "
     "<i>linear joint, mm</i>: a prismatic joint that slides), then a bar of the range and the joint's state "
     "in words. The bar, the value box and the words turn amber within the warning margin (<i>Warn within</i>, "
     "default 5 % of the range) and red at or beyond a limit. A value box keeps the digits you type (4 decimals "
     "in deg, mm; 5 in in; 6 in m, rad) and moves the joint when you press Enter, leave the box or pause typing — "
     "never through the partial numbers on the way. Arrow keys move the focused joint by the "
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
     "position only. Poser solves in the background as you type (the window never waits for it; 'Solving…' "
     "shows meanwhile) and lists every branch, with the same numbers as <tt>poser ik</tt>: the branch number "
     "(the ghost's label too), its configuration and under it every joint's value; <i>limits</i>: yes, or NO "
     "with the joint furthest beyond a limit; <i>manip.</i>: its manipulability (unit in the header) and "
     "whether it is singular; <i>move</i>: the largest single joint move from the present pose (turns and "
     "slides are given apart on an arm with both). The branches of one configuration — its <i>turn variants</i> "
     "(the same configuration with whole extra turns of a joint) and any other solution found for it — are "
     "grouped under the best of them: '+8' under its number says eight more; open the row (Right arrow, or "
     "click the triangle) to list them. A <i>family</i> — a "
     "target that leaves a joint, the tool's turn or its orientation free, or a redundant arm's self-motion — "
     "is one row marked '· family'; the line below the list says what is free and over which range it stays "
     "within limits. <i>Only within limits</i> lists (and draws as ghosts) only the branches that reach with "
     "every joint inside its limits. Hover a branch to see its ghost and, under the list, everything about it "
     "(every violation, the condition number, the distance from the pose it was solved at, the joint values); "
     "select it and press <i>Apply branch</i> (or Enter, or double-click) to move the arm there; <i>Copy "
     "joints</i> (Ctrl+C) copies its joint values as one line for <tt>poser fk --joints</tt>. An unreachable "
     "target is explained with one set of figures: the <i>closest approach</i> within limits (how far it misses "
     "the position, and the orientation), and the <i>nearest reachable point</i> — the tool pose of that closest "
     "approach; type it back in and it is reached."),
    ("Manipulability and condition number",
     "Both say how far the pose is from a singularity, where the tool cannot move in some direction however the "
     "joints turn. The <i>manipulability</i> (Yoshikawa's measure: the product of the Jacobian's singular values "
     "over the directions the arm controls) is shown with its unit, which depends on the arm — mm³ for the demo arm "
     "Heron 6 (six rotary joints, lengths in mm), m² for Boom 3 (two rotary joints and a slide, in m); the column "
     "header and the tooltips name it. It is 0 at a singularity and larger the more freely the tool can move; "
     "compare it between poses of the same arm only. The <i>condition number</i> is the figure without a unit: Poser"
     " divides every length in the Jacobian by the arm's size, so it reads the same in mm, m or in. It is 1 at best "
     "and grows without bound towards a singularity (∞ at one); above 80 Poser warns in the status bar and in the "
     "branch list, and names the kind of singularity (wrist axes aligned, wrist centre on the base axis, arm "
     "stretched out or folded back) with the joints involved."),
    ("Arm editor",
     "The arm's rows (DH parameters a, alpha, d, theta, limits min/max and home) with its name, units, "
     "convention, base and tool. In the modified convention the columns read a(i−1) and alpha(i−1): they "
     "belong before the joint. Every edit is checked at once with the arm-file loader's own checks; an "
     "invalid edit is refused with the loader's message, the cell at fault is filled red (its row faintly), "
     "and the arm stays as it was — the window counts as unsaved, and Save refuses until it is fixed (it offers "
     "to take you to the problem, or to save the last valid arm to another file). Names are kept exactly as "
     "typed; a name of only invisible characters, or one that differs from another only by spaces, invisible "
     "characters or Unicode form, is refused. A new joint is named by its position (J3 for the third). A blank "
     "home means 0, or the middle of the range when 0 is outside it. Switching the DH convention asks: "
     "<i>convert the table</i> (the same physical arm and tool pose, other numbers) or <i>keep the numbers</i> "
     "(read in the other convention: another arm)."),
    ("Studies",
     "The Studies panel (Ctrl+6, menu Studies) runs four studies in the background, one at a time, with a progress "
     "bar; <i>Cancel</i> (Ctrl+., or Esc in the panel) stops the running one and leaves every result as it was. "
     "<i>Workspace</i>: joint samples within the limits (with base and tool) give the volume (an area for a planar "
     "arm) with its error, the bounds, a point cloud coloured by the rank of its manipulability (orange lowest, blue "
     "highest) and section outlines: a vertical one through the base axis and a horizontal one at the height you "
     "choose. The Target panel then says whether the target lies inside it. <i>Reach</i>: load a target list "
     "(CSV: name, x, y, z; optional roll, pitch, yaw in the arm's angle unit and free_spin yes/no — any turn about "
     "tool Z will do; numbers in the arm's units; malformed rows are reported by line and skipped) and check every "
     "target from home, each from the one before, with the same numbers as <tt>poser reach</tt>. The table sorts by "
     "any column; choosing a row makes it the target. In the 3D view a ● ball is reached within limits, a ✕ star is "
     "blocked by limits, a ◇ diamond is out of reach — shape and colour both say it. <i>Placement</i>: base "
     "positions (and yaw) on a grid with their units and steps, scored by the targets reached, then the smallest "
     "limit margin, then manipulability; the best are listed and the coverage map shows a tile per base position, "
     "pale (none) → amber (half) → green (all). <i>Cube</i>: the largest cube along the base axes in the workspace "
     "and the five ISO 9283 test positions on a diagonal plane (laid out from memory of the standard: check them "
     "before a formal test), each checked with the tool orientation you choose. <i>Show in 3D</i> switches each "
     "drawing on and off. Another arm clears every study of the previous one."),
    ("Saving",
     "File ▸ Open, Save (Ctrl+S), Save As. Save writes exactly what the editor shows and keeps your comments "
     "with their joints. Before writing, Poser checks that the file is still the one it loaded (time, size and "
     "content): if another program changed it, Poser asks — reload it, overwrite it, or save as another file. "
     "While the file is open, Poser watches it and offers (in a bar under the menu, without interrupting you) to "
     "reload it when another program changes it. A read-only file is replaced only when you say so (it stays "
     "read-only); saving through a symbolic link writes the file it points to (the link stays); a file with "
     "several hard links is rewritten in place, so every name sees the new arm. Every applied edit is also kept "
     "in a recovery copy, written in the background, so a crash loses nothing: Poser offers it the next time you "
     "open the same file. If the recovery copy cannot be written, a red notice says so until it can — your "
     "unsaved edits are then only in the window."),
    ("Status bar",
     "The singularity verdict with the pose's condition number and manipulability, a warning when a point of the "
     "arm or tool is below the mounting plane, the joints near or at limits (worst first), the arm's name, units "
     "and file, and how the 3D view is drawn (or why the 2D three-view is shown). A text too long for the bar "
     "ends in … ; hover it to read it whole."),
    ("Keys",
     "Ctrl+1 … Ctrl+6 go to the 3D view, Joints, Frames, Target, Arm editor and Studies; Ctrl+Shift+W workspace, "
     "Ctrl+Shift+L load targets, Ctrl+Shift+R reach study, Ctrl+Shift+P placement search, Ctrl+Shift+B test cube, "
     "Ctrl+. cancel the running study; Ctrl+O open, Ctrl+S save, "
     "Ctrl+Shift+S save as, Ctrl+Q quit, F1 this guide. In the branch list: Up/Down pick a branch, Right/Left "
     "open and close a configuration, Enter applies it, Ctrl+C copies its joint values. Tab moves through every "
     "control."),
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
