"""The review sheet: a drawing of the cell with its title block, legend, summary and table.

``layout`` (page arithmetic) and ``content`` (what the sheet says) are plain Python;
``render`` paints sheets onto a QPainter (PDF, SVG, PNG) with the canvas's own drawing
code; ``dialog`` is File > Export > Review Sheet with its preview.
"""
