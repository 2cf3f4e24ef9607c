"""Presentation: tables and formatting, the HTML report, the steps CSV, the safety cautions."""
