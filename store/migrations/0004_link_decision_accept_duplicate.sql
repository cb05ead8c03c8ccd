-- Schema version 4: a link decision may also be 'accept-duplicate' (accept a
-- registry trial although its results match a published study of the same
-- review). SQLite cannot change a CHECK constraint in place, so the links
-- table is rebuilt. link_groups refers to links with ON DELETE CASCADE, so
-- its rows are set aside first and link_groups is dropped before links:
-- dropping links then cascades to nothing.

CREATE TABLE link_groups_v3 AS SELECT * FROM link_groups;
DROP TABLE link_groups;

CREATE TABLE links_v4 (
    review_id       TEXT    NOT NULL REFERENCES reviews (review_id) ON DELETE CASCADE,
    trial_id        TEXT    NOT NULL,
    outcome_index   INTEGER NOT NULL,
    flip            INTEGER NOT NULL CHECK (flip IN (0, 1)),
    unit_from       TEXT    NOT NULL,
    decision        TEXT    NOT NULL CHECK (decision IN ('', 'accept', 'reject', 'accept-duplicate')),
    class           TEXT    NOT NULL,
    outcome_title   TEXT    NOT NULL,
    time_frame      TEXT    NOT NULL,
    score           REAL,
    reasons         TEXT    NOT NULL,
    auto_accepted   INTEGER NOT NULL CHECK (auto_accepted IN (0, 1)),
    decided_at      TEXT,   -- NULL while undecided
    source_path     TEXT    NOT NULL,
    source_sha256   TEXT    NOT NULL,
    source_position TEXT    NOT NULL,
    ingested_at     TEXT    NOT NULL,
    PRIMARY KEY (review_id, trial_id, outcome_index)
) STRICT, WITHOUT ROWID;

INSERT INTO links_v4 (review_id, trial_id, outcome_index, flip, unit_from, decision, class, outcome_title, time_frame,
    score, reasons, auto_accepted, decided_at, source_path, source_sha256, source_position, ingested_at)
SELECT review_id, trial_id, outcome_index, flip, unit_from, decision, class, outcome_title, time_frame,
    score, reasons, auto_accepted, decided_at, source_path, source_sha256, source_position, ingested_at
FROM links;
DROP TABLE links;
ALTER TABLE links_v4 RENAME TO links;

CREATE INDEX links_review ON links (review_id, decision);
CREATE INDEX links_trial ON links (trial_id, outcome_index);

CREATE TABLE link_groups (
    review_id     TEXT    NOT NULL,
    trial_id      TEXT    NOT NULL,
    outcome_index INTEGER NOT NULL,
    role          TEXT    NOT NULL CHECK (role IN ('treat', 'ctrl')),
    pos           INTEGER NOT NULL,
    group_id      TEXT    NOT NULL,
    PRIMARY KEY (review_id, trial_id, outcome_index, role, pos),
    FOREIGN KEY (review_id, trial_id, outcome_index)
        REFERENCES links (review_id, trial_id, outcome_index) ON DELETE CASCADE
) STRICT, WITHOUT ROWID;

INSERT INTO link_groups (review_id, trial_id, outcome_index, role, pos, group_id)
SELECT review_id, trial_id, outcome_index, role, pos, group_id FROM link_groups_v3;
DROP TABLE link_groups_v3;
