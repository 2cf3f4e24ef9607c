"""Kept so that older imports keep working: the monthly generator now lives in :mod:`core.model.weather.monthly`."""

from core.model.weather.monthly import *  # noqa: F403
from core.model.weather.monthly import monthly_weather  # noqa: F401
