"""Analyses above the orchestrator: options, compare, sweep, resolution, design checks."""
