"""Robustness: bad input, extreme sites, numeric guards and file safety, with figures to show for it."""
