"""The touch app (``stakeline.app.main``), its service layer and the command line."""
