"""The Streamlit page over :mod:`core`: ``python -m explorer SCENARIO`` (see :mod:`explorer.app`)."""
