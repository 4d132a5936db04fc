"""Pictures of the studies as PNG files, drawn with Qt offscreen (``QImage`` + ``QPainter``).

Qt-using, so never imported by :mod:`poser.core`; the command line imports it only when a picture is asked
for (``--png``).  Without a display the offscreen platform is used (``QT_QPA_PLATFORM=offscreen``).

| module | picture |
|---|---|
| :mod:`.canvas` | the one drawing kit: figure, panels with axes and units, colour scale, legend |
| :mod:`.workspace` | the workspace: vertical and horizontal sections, the tool-point cloud by dexterity |
| :mod:`.coverage` | the placement coverage map |
| :mod:`.cube` | the ISO 9283 test cube and its positions |
"""
