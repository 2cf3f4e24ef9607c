"""The physics and rules leaves: pure functions over arrays; they do not import one another."""
