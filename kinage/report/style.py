"""The figure style now lives in :mod:`kinage.display.style` (below the stages, which draw with it); this
name is kept so code written against ``kinage.report.style`` keeps working."""

from ..display.style import *  # noqa: F401,F403
from ..display.style import __all__  # noqa: F401
