"""The rules of direct manipulation on the canvas, without Qt.

Pointer events come in as :class:`~app.interaction.pointer.Pointer` values (world and
pixel position, buttons held, modifier keys), so every rule here is tested with small
fake events: the drag state machine (:mod:`.drag`), the drawing and measuring tools
(:mod:`.tools`), snapping (:mod:`.snapping`), picking (:mod:`.picking`), the cell edits
they make (:mod:`.edits`) and the zoom-to-fit arithmetic (:mod:`.fit`). An
import-linter contract keeps Qt, pyqtgraph and shapely out of this package.
"""
