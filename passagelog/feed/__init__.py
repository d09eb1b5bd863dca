"""Live NMEA 0183 input."""
