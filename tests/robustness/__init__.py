"""Robustness: bad input, extreme sites, numeric guards and file safety (issue 7), with figures to show for it."""
