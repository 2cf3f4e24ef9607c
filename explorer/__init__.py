"""The Streamlit page over :mod:`core`.

``explorer.charts`` is the page's name for its charts (:mod:`explorer.page_charts`: the builders of
:mod:`core.present.charts` and ``draw``); it is set here so that ``from explorer import charts`` and
``import explorer.charts`` both find it.
"""

import sys

from explorer import page_charts as charts

sys.modules.setdefault(f"{__name__}.charts", charts)
