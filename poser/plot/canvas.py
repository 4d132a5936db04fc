"""The drawing kit of the study pictures: a white figure of panels, each with axes, ticks, units and a
title; points coloured on one colour scale with its bar; polylines; a legend; a footnote.

Sizes are in pixels of the figure (a 1600 × 900 picture reads on a screen and on paper).  Equal axes:
a panel keeps one length per pixel along both axes, so circles stay round.
"""

from __future__ import annotations

import math
import os

import numpy as np

__all__ = ["application", "Figure", "Panel", "colour", "nice_ticks", "SCALE_STOPS", "save"]

SCALE_STOPS = ((0.0, (38, 52, 110)), (0.35, (31, 122, 140)), (0.7, (214, 190, 92)), (1.0, (181, 69, 43)))
"""Our colour scale, low to high: ink blue, sea green, sand, brick."""

_APP = None


def application():
    """The application for drawing (made once, offscreen when there is no display).

    A ``QApplication``, not a bare ``QGuiApplication``: a process that draws a picture may open a window later
    (the test suite does both in one process), and Qt aborts when a widget is made under a QGuiApplication.
    """
    global _APP
    from PySide6.QtGui import QGuiApplication
    from PySide6.QtWidgets import QApplication

    app = QGuiApplication.instance()
    if app is not None:
        return app
    if not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"):
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    _APP = QApplication(["poser-plot"])
    return _APP


def colour(t):
    """Colours (..., 3) uint8 on :data:`SCALE_STOPS` for values ``t`` (...) in 0 … 1."""
    t = np.clip(np.asarray(t, float), 0.0, 1.0)
    xs = np.array([s[0] for s in SCALE_STOPS])
    cs = np.array([s[1] for s in SCALE_STOPS], float)
    return np.stack([np.interp(t, xs, cs[:, k]) for k in range(3)], axis=-1).astype(np.uint8)


def nice_ticks(lo: float, hi: float, count: int = 6):
    """Round tick values within [lo, hi] (about ``count`` of them)."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo]
    raw = (hi - lo) / max(count, 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = min((m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw), default=10 * mag)
    first = math.ceil(lo / step - 1e-9) * step
    ticks = []
    v = first
    while v <= hi + 1e-9 * step:
        ticks.append(0.0 if abs(v) < 1e-12 * step else v)
        v += step
    return ticks


def _tick_text(v, ticks):
    step = abs(ticks[1] - ticks[0]) if len(ticks) > 1 else 1.0
    digits = max(0, -int(math.floor(math.log10(step)))) if step > 0 else 0
    return f"{v:.{digits}f}"


class Figure:
    """A white picture ``width`` × ``height`` px with a title; panels and legends draw on it."""

    def __init__(self, width: int = 1600, height: int = 900, title: str = ""):
        from PySide6.QtGui import QColor, QImage, QPainter

        application()
        self.width, self.height = int(width), int(height)
        self.image = QImage(self.width, self.height, QImage.Format.Format_RGB32)
        self.image.fill(QColor(255, 255, 255))
        self.painter = QPainter(self.image)
        self.painter.setRenderHint(QPainter.RenderHint.Antialiasing, True)
        self.painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
        if title:
            self.text(24, 16, self.width - 48, 40, title, size=20, bold=True)

    def font(self, size=13, bold=False):
        from PySide6.QtGui import QFont

        f = QFont("DejaVu Sans")
        f.setPixelSize(int(size))
        f.setBold(bool(bold))
        return f

    def text(self, x, y, w, h, s, size=13, bold=False, align="left", colour=(30, 30, 30), backdrop=False):
        """Text in the box (x, y, w, h); ``align`` left, centre or right; words wrap; ``backdrop``: on a white
        patch (a label over points stays readable)."""
        from PySide6.QtCore import QRectF, Qt
        from PySide6.QtGui import QColor

        p = self.painter
        p.setFont(self.font(size, bold))
        flags = {"left": Qt.AlignmentFlag.AlignLeft, "centre": Qt.AlignmentFlag.AlignHCenter,
                 "right": Qt.AlignmentFlag.AlignRight}[align] | Qt.AlignmentFlag.AlignTop | Qt.TextFlag.TextWordWrap
        if backdrop:
            r = p.boundingRect(QRectF(x, y, w, h), int(flags), s).adjusted(-2, 0, 2, 0)
            p.fillRect(r, QColor(255, 255, 255, 220))
        p.setPen(QColor(*colour))
        p.drawText(QRectF(x, y, w, h), int(flags), s)

    def colour_bar(self, x, y, w, h, lo, hi, label, integer=False):
        """A vertical colour bar (x, y, w, h) from ``lo`` (bottom) to ``hi`` (top), round ticks (whole numbers
        when ``integer``) and ``label`` above."""
        from PySide6.QtCore import QRectF
        from PySide6.QtGui import QColor, QPen

        p = self.painter
        steps = 64
        for k in range(steps):
            c = colour((k + 0.5) / steps)
            p.fillRect(QRectF(x, y + h - (k + 1) * h / steps, w, h / steps + 1), QColor(*map(int, c)))
        p.setPen(QPen(QColor(60, 60, 60), 1))
        p.drawRect(QRectF(x, y, w, h))
        self.text(x - 40, y - 44, w + 200, 40, label, size=13, bold=True)
        ticks = nice_ticks(lo, hi, 5) if hi > lo else [lo]
        if not integer and hi > lo:  # the ends too, unless a round tick is next to one
            ticks = sorted(set(ticks) | {v for v in (lo, hi) if min(abs(v - t) for t in ticks) > 0.08 * (hi - lo)})
        if integer:
            ticks = sorted({int(round(v)) for v in ticks if abs(v - round(v)) < 1e-9} | {int(lo), int(hi)})
        for v in ticks:
            t = (v - lo) / (hi - lo) if hi > lo else 0.0
            yy = y + h - t * h
            p.drawLine(int(x + w), int(yy), int(x + w + 5), int(yy))
            self.text(x + w + 8, yy - 9, 120, 20, str(v) if integer else f"{v:.3g}", size=12)

    def legend(self, x, y, items, size=13, width=560):
        """Legend rows at (x, y): ``items`` = [(kind, rgb, words)], kind ``"line"``, ``"dot"``, ``"square"``,
        ``"cross"``, ``"ring"``; returns the height used."""
        from PySide6.QtCore import QPointF, QRectF
        from PySide6.QtGui import QBrush, QColor, QPen

        p = self.painter
        row = size + 10
        yy = y - row / 2
        for kind, rgb, words in items:
            yy += row / 2 + (row / 2 if words.count("\n") == 0 else row * 0.5 * (words.count("\n") + 1))
            c = QColor(*rgb)
            if kind == "line":
                p.setPen(QPen(c, 2.5))
                p.drawLine(int(x), int(yy), int(x + 26), int(yy))
            elif kind == "dot":
                p.setPen(QPen(c, 1))
                p.setBrush(QBrush(c))
                p.drawEllipse(QPointF(x + 13, yy), 4, 4)
            elif kind == "square":
                p.setPen(QPen(QColor(40, 40, 40), 1))
                p.setBrush(QBrush(c))
                p.drawRect(QRectF(x + 7, yy - 6, 12, 12))
            elif kind == "ring":
                p.setPen(QPen(c, 2.5))
                p.setBrush(QBrush())
                p.drawEllipse(QPointF(x + 13, yy), 6, 6)
            elif kind == "cross":
                p.setPen(QPen(c, 2.5))
                p.drawLine(int(x + 7), int(yy - 6), int(x + 19), int(yy + 6))
                p.drawLine(int(x + 7), int(yy + 6), int(x + 19), int(yy - 6))
            self.text(x + 34, yy - size * 0.7, width - 34, row * (words.count("\n") + 1) + 4, words, size=size)
            yy += (row / 2) * words.count("\n")
        return yy - y

    def abort(self):
        """Stop drawing without writing anything (after an error)."""
        if self.painter.isActive():
            self.painter.end()

    def save(self, path):
        """Finish the drawing and write it as PNG; OSError with the reason when it cannot be written."""
        self.painter.end()
        save(self.image, path)


def save(image, path):
    """Write a QImage as PNG to ``path`` (atomically: a temporary file beside it, then a rename)."""
    import tempfile

    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise OSError(f"folder {folder!r} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=".poser-", suffix=".png", dir=folder)
    os.close(fd)
    try:
        if not image.save(tmp, "PNG"):
            raise OSError("Qt could not write the PNG (disk full or no permission?)")
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


class Panel:
    """A plot area on a figure: data rectangle (x0, x1, y0, y1) mapped into pixels (equal axes by default)."""

    def __init__(self, fig: Figure, box, xlim, ylim, xlabel, ylabel, title="", equal=True):
        from PySide6.QtCore import Qt
        from PySide6.QtGui import QColor, QPen

        self.fig = fig
        x, y, w, h = box
        self.box = box
        x0, x1 = map(float, xlim)
        y0, y1 = map(float, ylim)
        if x1 <= x0:
            x0, x1 = x0 - 1, x1 + 1
        if y1 <= y0:
            y0, y1 = y0 - 1, y1 + 1
        left, bottom, top = 78, 58, 34
        pw, ph = w - left - 16, h - bottom - top
        if equal:
            s = min(pw / (x1 - x0), ph / (y1 - y0))
            cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
            x0, x1 = cx - pw / (2 * s), cx + pw / (2 * s)
            y0, y1 = cy - ph / (2 * s), cy + ph / (2 * s)
        self.lim = (x0, x1, y0, y1)
        self.px = (x + left, y + top, pw, ph)
        p = fig.painter
        if title:
            fig.text(x, y, w, 26, title, size=15, bold=True, align="centre")
        p.setPen(QPen(QColor(235, 235, 235), 1))
        xt, yt = nice_ticks(x0, x1, 8), nice_ticks(y0, y1, 6)
        for v in xt:
            X, _ = self.map(v, y0)
            p.drawLine(int(X), int(self.px[1]), int(X), int(self.px[1] + ph))
        for v in yt:
            _, Y = self.map(x0, v)
            p.drawLine(int(self.px[0]), int(Y), int(self.px[0] + pw), int(Y))
        p.setPen(QPen(QColor(90, 90, 90), 1))
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawRect(int(self.px[0]), int(self.px[1]), int(pw), int(ph))
        for v in xt:
            X, _ = self.map(v, y0)
            p.drawLine(int(X), int(self.px[1] + ph), int(X), int(self.px[1] + ph + 5))
            fig.text(X - 50, self.px[1] + ph + 7, 100, 20, _tick_text(v, xt), size=12, align="centre")
        for v in yt:
            _, Y = self.map(x0, v)
            p.drawLine(int(self.px[0] - 5), int(Y), int(self.px[0]), int(Y))
            fig.text(self.px[0] - 76, Y - 9, 68, 20, _tick_text(v, yt), size=12, align="right")
        fig.text(self.px[0], self.px[1] + ph + 30, pw, 22, xlabel, size=13, align="centre")
        from PySide6.QtCore import QRectF, Qt

        p.save()
        p.translate(x + 14, self.px[1] + ph / 2)
        p.rotate(-90)
        p.setFont(fig.font(13))
        p.setPen(QColor(30, 30, 30))
        p.drawText(QRectF(-ph / 2, -10, ph, 22), int(Qt.AlignmentFlag.AlignHCenter), ylabel)
        p.restore()

    def map(self, u, v):
        """Data → pixel coordinates (arrays or floats)."""
        x0, x1, y0, y1 = self.lim
        X0, Y0, W, H = self.px
        return X0 + (np.asarray(u, float) - x0) / (x1 - x0) * W, Y0 + H - (np.asarray(v, float) - y0) / (y1 - y0) * H

    def clip(self):
        from PySide6.QtCore import QRectF

        self.fig.painter.setClipRect(QRectF(*self.px))

    def unclip(self):
        self.fig.painter.setClipping(False)

    def points(self, u, v, rgb, radius=2.0):
        """Dots at (u, v) (k,), colours ``rgb`` (k, 3) uint8 or one (3,)."""
        from PySide6.QtCore import QPointF, Qt
        from PySide6.QtGui import QBrush, QColor, QPen

        p = self.fig.painter
        X, Y = self.map(u, v)
        cols = np.broadcast_to(np.asarray(rgb, np.uint8), (len(X), 3))
        self.clip()
        p.setPen(Qt.PenStyle.NoPen)
        for x, y, c in zip(X.tolist(), Y.tolist(), cols.tolist()):
            p.setBrush(QBrush(QColor(*c)))
            p.drawEllipse(QPointF(x, y), radius, radius)
        p.setPen(QPen(QColor(0, 0, 0)))
        self.unclip()

    def polyline(self, u, v, rgb=(20, 20, 20), width=2.0, closed=False, dash=False):
        from PySide6.QtCore import QPointF, Qt
        from PySide6.QtGui import QColor, QPen, QPolygonF

        p = self.fig.painter
        X, Y = self.map(u, v)
        pen = QPen(QColor(*rgb), width)
        if dash:
            pen.setStyle(Qt.PenStyle.DashLine)
        p.setPen(pen)
        p.setBrush(Qt.BrushStyle.NoBrush)
        poly = QPolygonF([QPointF(x, y) for x, y in zip(X.tolist(), Y.tolist())])
        self.clip()
        if closed:
            p.drawPolygon(poly)
        else:
            p.drawPolyline(poly)
        self.unclip()

    def cells(self, u_edges, v_edges, rgb):
        """Filled cells between edges (nu + 1,), (nv + 1,), colours ``rgb`` (nv, nu, 3) uint8."""
        from PySide6.QtCore import QRectF
        from PySide6.QtGui import QColor

        p = self.fig.painter
        X, _ = self.map(u_edges, self.lim[2])
        _, Y = self.map(self.lim[0], v_edges)
        self.clip()
        for j in range(len(v_edges) - 1):
            for i in range(len(u_edges) - 1):
                c = rgb[j, i]
                p.fillRect(QRectF(min(X[i], X[i + 1]), min(Y[j], Y[j + 1]), abs(X[i + 1] - X[i]) + 0.5,
                                  abs(Y[j + 1] - Y[j]) + 0.5), QColor(*map(int, c)))
        self.unclip()

    def marker(self, u, v, kind, rgb, size=7.0, label=None):
        """One marker (``"cross"``, ``"ring"``, ``"square"``, ``"dot"``; ``"none"``: the label alone) at (u, v),
        with a label beside it."""
        from PySide6.QtCore import QPointF, QRectF
        from PySide6.QtGui import QBrush, QColor, QPen

        p = self.fig.painter
        X, Y = (float(a) for a in self.map(u, v))
        c = QColor(*rgb)
        self.clip()
        if kind == "cross":
            p.setPen(QPen(c, 2.5))
            p.drawLine(int(X - size), int(Y - size), int(X + size), int(Y + size))
            p.drawLine(int(X - size), int(Y + size), int(X + size), int(Y - size))
        elif kind == "ring":
            p.setPen(QPen(c, 2.5))
            p.setBrush(QBrush())
            p.drawEllipse(QPointF(X, Y), size, size)
        elif kind == "square":
            p.setPen(QPen(QColor(30, 30, 30), 1))
            p.setBrush(QBrush(c))
            p.drawRect(QRectF(X - size / 2, Y - size / 2, size, size))
        elif kind != "none":
            p.setPen(QPen(c, 1))
            p.setBrush(QBrush(c))
            p.drawEllipse(QPointF(X, Y), size / 2, size / 2)
        p.setBrush(QBrush())
        self.unclip()
        if label:
            self.fig.text(X + size + 3, Y - 9, 200, 20, label, size=12, backdrop=True)
