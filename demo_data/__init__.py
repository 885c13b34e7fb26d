"""The invented Tessaly Creek demo survey (made-up creek, site, crew and numbers)."""
