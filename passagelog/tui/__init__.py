"""The Textual terminal UI."""
