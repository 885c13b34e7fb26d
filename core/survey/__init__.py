"""Survey figures: readings reduced to elevations, exact section geometry, hydraulics, ratings,
repeat-visit comparison, uncertainty and roughness.  numpy only: no UI, no SQL."""
