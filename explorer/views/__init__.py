"""The sections of the explorer page, one module each; each ``render`` takes what it shows and draws it."""
