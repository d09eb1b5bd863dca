"""The SQLite logbook: schema, migrations, append-only records, integrity chain."""
