"""Readers and writers for NMEA 0183, GPX 1.1, IEC 61174 (RTZ) and CSV."""
