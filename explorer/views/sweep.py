"""The sweep: panel count × tilt or azimuth, as a heatmap of added self-consumed energy."""

from __future__ import annotations

import streamlit as st

from explorer import adapters


def render(sc, c, caching) -> None:
    mod = adapters.sweep_module()
    if isinstance(mod, adapters.Missing):
        st.info(str(mod))
        return
    raise NotImplementedError("wire core.sweep here")
