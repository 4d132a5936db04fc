"""Questions the window asks: one way to put a choice to the user, and to answer it in tests.

:func:`ask_box` shows a message box with named choices and returns the chosen key;
:class:`Asker` wraps it so a window that asks nothing (tests, snapshots) takes queued
answers instead, or the question's default.
"""

from __future__ import annotations

from PySide6.QtWidgets import QMessageBox

__all__ = ["ask_box", "Asker"]


def ask_box(parent, title: str, text: str, info: str, choices, default: str, icon=QMessageBox.Icon.Question) -> str:
    """Ask with buttons ``choices`` (a sequence of ``(key, label)``; a label may hold an ``&`` mnemonic).

    Returns the chosen key; Escape or closing the box chooses ``"cancel"`` when it is offered, else ``default``.
    """
    box = QMessageBox(parent)
    box.setIcon(icon)
    box.setWindowTitle(title)
    box.setText(text)
    if info:
        box.setInformativeText(info)
    buttons = {}
    for key, label in choices:
        role = QMessageBox.ButtonRole.RejectRole if key == "cancel" else QMessageBox.ButtonRole.AcceptRole
        buttons[box.addButton(label, role)] = key
    for b, key in buttons.items():
        if key == default:
            box.setDefaultButton(b)
        if key == "cancel":
            box.setEscapeButton(b)
    box.exec()
    return buttons.get(box.clickedButton(), "cancel" if any(k == "cancel" for k, _ in choices) else default)


class Asker:
    """``asker(title, text, info, choices, default)`` → key; asks only when ``interactive``.

    Otherwise it takes the first queued answer (``answers``, a list shared with the window) when it is one of
    the choices, else ``default``; ``asked`` records every question (title, text) for tests.
    """

    def __init__(self, parent, interactive: bool, answers: list):
        self.parent = parent
        self.interactive = interactive
        self.answers = answers
        self.asked: list[tuple[str, str]] = []

    def __call__(self, title, text, info, choices, default, icon=QMessageBox.Icon.Question) -> str:
        self.asked.append((title, text))
        keys = [k for k, _ in choices]
        if self.interactive:
            return ask_box(self.parent, title, text, info, choices, default, icon)
        if self.answers and self.answers[0] in keys:
            return self.answers.pop(0)
        return default
