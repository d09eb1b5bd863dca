"""Pure navigation math on WGS84 (and an optional sphere): positions, legs, offsets,
dead reckoning and vector triangles, units and zone time. No I/O, no clock, no printing."""
