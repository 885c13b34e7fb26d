"""Plain files in and out: section CSV files, and the stations, rating and GeoJSON exports."""
