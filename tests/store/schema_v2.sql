CREATE TABLE derived_result (
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    kind TEXT NOT NULL CHECK (length(kind) > 0),
    stamp TEXT NOT NULL,
    written_utc TEXT NOT NULL,
    data BLOB NOT NULL,
    PRIMARY KEY (voyage_id, kind)
);
