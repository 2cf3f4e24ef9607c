"""secondroof core: physics, rules and orchestration (no Streamlit)."""
