"""Tables and figures out of review results: CSV, Markdown, HTML, JSON, SVG."""
