"""Input and output: run sheets, units, instrument profiles, exports and safe writes."""
