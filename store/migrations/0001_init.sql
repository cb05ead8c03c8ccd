-- Schema version 1.
--
-- Conventions:
--   * Every table is STRICT, so a value of the wrong type is an error.
--   * A number that arrived as text is kept twice: <name>_text holds the
--     text exactly as found, <name> holds the parsed REAL, or NULL when the
--     text was not a number ("NA", "").
--   * Lists keep their original order in a pos column (0-based).
--   * Columns named *_at hold wall-clock times (RFC 3339, UTC). They are
--     volatile and left out of Dump.
--   * Every child row of a trial references trials(trial_id) directly with
--     ON DELETE CASCADE; replacing a trial deletes its row and re-inserts it
--     with all children. The trial row carries the provenance (source file,
--     its SHA-256, position in the file, ingest time) for all its children.

CREATE TABLE source_files (
    sha256      TEXT    NOT NULL,
    path        TEXT    NOT NULL,
    size        INTEGER NOT NULL,
    format      TEXT    NOT NULL,
    records     INTEGER NOT NULL,
    rejected    INTEGER NOT NULL,
    started_at  TEXT    NOT NULL,
    finished_at TEXT    NOT NULL,
    PRIMARY KEY (sha256, path)
) STRICT, WITHOUT ROWID;

CREATE TABLE trials (
    trial_id                     TEXT    NOT NULL PRIMARY KEY,
    registry                     TEXT    NOT NULL,
    org_study_id                 TEXT    NOT NULL,
    brief_title                  TEXT    NOT NULL,
    official_title               TEXT    NOT NULL,
    acronym                      TEXT    NOT NULL,
    organization_name            TEXT    NOT NULL,
    organization_class           TEXT    NOT NULL,
    overall_status               TEXT    NOT NULL,
    last_known_status            TEXT    NOT NULL,
    why_stopped                  TEXT    NOT NULL,
    study_type                   TEXT    NOT NULL,
    allocation                   TEXT    NOT NULL,
    intervention_model           TEXT    NOT NULL,
    primary_purpose              TEXT    NOT NULL,
    masking                      TEXT    NOT NULL,
    enrollment                   INTEGER,          -- NULL when not stated
    enrollment_type              TEXT    NOT NULL,
    lead_sponsor_name            TEXT    NOT NULL,
    lead_sponsor_class           TEXT    NOT NULL,
    start_date                   TEXT    NOT NULL, -- yyyy, yyyy-MM or yyyy-MM-dd as found
    start_date_type              TEXT    NOT NULL, -- ACTUAL, ESTIMATED or ''
    primary_completion_date      TEXT    NOT NULL,
    primary_completion_date_type TEXT    NOT NULL,
    completion_date              TEXT    NOT NULL,
    completion_date_type         TEXT    NOT NULL,
    first_posted_date            TEXT    NOT NULL,
    first_posted_date_type       TEXT    NOT NULL,
    results_first_posted         TEXT    NOT NULL,
    results_first_posted_type    TEXT    NOT NULL,
    last_update_posted           TEXT    NOT NULL,
    last_update_posted_type      TEXT    NOT NULL,
    version_holder               TEXT    NOT NULL,
    has_results                  INTEGER CHECK (has_results IN (0, 1)), -- NULL when unknown
    publication                  TEXT    NOT NULL, -- yes, no, unknown or '' (API records)
    content_hash                 TEXT    NOT NULL,
    source_path                  TEXT    NOT NULL,
    source_sha256                TEXT    NOT NULL,
    source_position              TEXT    NOT NULL,
    ingested_at                  TEXT    NOT NULL
) STRICT;

CREATE INDEX trials_status ON trials (overall_status, has_results);
CREATE INDEX trials_has_results ON trials (has_results);
CREATE INDEX trials_sponsor ON trials (lower(lead_sponsor_name));
CREATE INDEX trials_completion ON trials (completion_date);

-- Other identifiers of a trial: kind 'alias' (an old registry id of the
-- same record) or 'secondary' (EU numbers, other registries, grants).
CREATE TABLE trial_ids (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    kind     TEXT    NOT NULL CHECK (kind IN ('alias', 'secondary')),
    pos      INTEGER NOT NULL,
    other_id TEXT    NOT NULL,
    id_type  TEXT    NOT NULL,
    domain   TEXT    NOT NULL,
    link     TEXT    NOT NULL,
    PRIMARY KEY (trial_id, kind, pos)
) STRICT, WITHOUT ROWID;

CREATE INDEX trial_ids_other ON trial_ids (other_id);

CREATE TABLE trial_phases (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    pos      INTEGER NOT NULL,
    phase    TEXT    NOT NULL,
    PRIMARY KEY (trial_id, pos)
) STRICT, WITHOUT ROWID;

-- Conditions, keywords and the registry-derived condition and
-- intervention terms.
CREATE TABLE trial_terms (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    kind     TEXT    NOT NULL CHECK (kind IN ('condition', 'keyword', 'condition_term', 'intervention_term')),
    pos      INTEGER NOT NULL,
    term     TEXT    NOT NULL,
    PRIMARY KEY (trial_id, kind, pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE trial_collaborators (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    pos      INTEGER NOT NULL,
    name     TEXT    NOT NULL,
    class    TEXT    NOT NULL,
    PRIMARY KEY (trial_id, pos)
) STRICT, WITHOUT ROWID;

CREATE INDEX trial_collaborators_name ON trial_collaborators (lower(name));

CREATE TABLE arms (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    arm_pos     INTEGER NOT NULL,
    label       TEXT    NOT NULL,
    type        TEXT    NOT NULL,
    description TEXT    NOT NULL,
    PRIMARY KEY (trial_id, arm_pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE arm_intervention_names (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    arm_pos  INTEGER NOT NULL,
    pos      INTEGER NOT NULL,
    name     TEXT    NOT NULL,
    PRIMARY KEY (trial_id, arm_pos, pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE interventions (
    trial_id         TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    intervention_pos INTEGER NOT NULL,
    type             TEXT    NOT NULL,
    name             TEXT    NOT NULL,
    description      TEXT    NOT NULL,
    PRIMARY KEY (trial_id, intervention_pos)
) STRICT, WITHOUT ROWID;

-- Per-intervention lists: kind 'arm_label' (armGroupLabels) or
-- 'other_name' (otherNames).
CREATE TABLE intervention_names (
    trial_id         TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    intervention_pos INTEGER NOT NULL,
    kind             TEXT    NOT NULL CHECK (kind IN ('arm_label', 'other_name')),
    pos              INTEGER NOT NULL,
    name             TEXT    NOT NULL,
    PRIMARY KEY (trial_id, intervention_pos, kind, pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE registered_outcomes (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    pos         INTEGER NOT NULL,
    kind        TEXT    NOT NULL,
    measure     TEXT    NOT NULL,
    description TEXT    NOT NULL,
    time_frame  TEXT    NOT NULL,
    PRIMARY KEY (trial_id, pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE trial_references (
    trial_id TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    pos      INTEGER NOT NULL,
    pmid     TEXT    NOT NULL,
    type     TEXT    NOT NULL,
    citation TEXT    NOT NULL,
    PRIMARY KEY (trial_id, pos)
) STRICT, WITHOUT ROWID;

CREATE INDEX trial_references_pmid ON trial_references (pmid) WHERE pmid <> '';

-- Posted outcome measures. outcome_pos is the position in Trial.Outcomes;
-- outcome_index is Outcome.Index as the parser set it (what links use).
CREATE TABLE outcomes (
    trial_id         TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos      INTEGER NOT NULL,
    outcome_index    INTEGER NOT NULL,
    type             TEXT    NOT NULL,
    title            TEXT    NOT NULL,
    description      TEXT    NOT NULL,
    population       TEXT    NOT NULL,
    time_frame       TEXT    NOT NULL,
    reporting_status TEXT    NOT NULL,
    param_type       TEXT    NOT NULL,
    dispersion_text  TEXT    NOT NULL,
    dispersion       TEXT    NOT NULL,
    unit             TEXT    NOT NULL,
    denom_units      TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos)
) STRICT, WITHOUT ROWID;

CREATE INDEX outcomes_index ON outcomes (trial_id, outcome_index);

CREATE TABLE result_groups (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos INTEGER NOT NULL,
    group_pos   INTEGER NOT NULL,
    group_id    TEXT    NOT NULL,
    title       TEXT    NOT NULL,
    description TEXT    NOT NULL,
    role        TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, group_pos)
) STRICT, WITHOUT ROWID;

-- Denominators. class_pos is NULL for the outcome-level rows.
CREATE TABLE denoms (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos INTEGER NOT NULL,
    class_pos   INTEGER,
    denom_pos   INTEGER NOT NULL,
    units       TEXT    NOT NULL
) STRICT;

CREATE INDEX denoms_key ON denoms (trial_id, outcome_pos, class_pos, denom_pos);

CREATE TABLE denom_counts (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos INTEGER NOT NULL,
    class_pos   INTEGER,
    denom_pos   INTEGER NOT NULL,
    count_pos   INTEGER NOT NULL,
    group_id    TEXT    NOT NULL,
    value_text  TEXT    NOT NULL,
    value       REAL
) STRICT;

CREATE INDEX denom_counts_key ON denom_counts (trial_id, outcome_pos, class_pos, denom_pos, count_pos);

CREATE TABLE classes (
    trial_id    TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos INTEGER NOT NULL,
    class_pos   INTEGER NOT NULL,
    title       TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, class_pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE categories (
    trial_id     TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos  INTEGER NOT NULL,
    class_pos    INTEGER NOT NULL,
    category_pos INTEGER NOT NULL,
    title        TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, class_pos, category_pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE measurements (
    trial_id        TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos     INTEGER NOT NULL,
    class_pos       INTEGER NOT NULL,
    category_pos    INTEGER NOT NULL,
    measurement_pos INTEGER NOT NULL,
    group_id        TEXT    NOT NULL,
    value_text      TEXT    NOT NULL,
    value           REAL,
    spread_text     TEXT    NOT NULL,
    spread          REAL,
    lower_text      TEXT    NOT NULL,
    lower           REAL,
    upper_text      TEXT    NOT NULL,
    upper           REAL,
    comment         TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, class_pos, category_pos, measurement_pos)
) STRICT, WITHOUT ROWID;

-- Measurements with their class and category titles, for queries.
CREATE VIEW measurement_rows AS
SELECT m.trial_id, m.outcome_pos, o.outcome_index, m.class_pos, c.title AS class_title,
       m.category_pos, g.title AS category_title, m.measurement_pos, m.group_id,
       m.value_text, m.value, m.spread_text, m.spread, m.lower_text, m.lower,
       m.upper_text, m.upper, m.comment
FROM measurements m
JOIN outcomes o ON o.trial_id = m.trial_id AND o.outcome_pos = m.outcome_pos
JOIN classes c ON c.trial_id = m.trial_id AND c.outcome_pos = m.outcome_pos AND c.class_pos = m.class_pos
JOIN categories g ON g.trial_id = m.trial_id AND g.outcome_pos = m.outcome_pos
    AND g.class_pos = m.class_pos AND g.category_pos = m.category_pos;

CREATE TABLE analyses (
    trial_id              TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos           INTEGER NOT NULL,
    analysis_pos          INTEGER NOT NULL,
    group_description     TEXT    NOT NULL,
    param_type            TEXT    NOT NULL,
    param_value_text      TEXT    NOT NULL,
    param_value           REAL,
    dispersion_type       TEXT    NOT NULL,
    dispersion_value_text TEXT    NOT NULL,
    dispersion_value      REAL,
    ci_pct_text           TEXT    NOT NULL,
    ci_pct                REAL,
    ci_sides              TEXT    NOT NULL,
    ci_lower_text         TEXT    NOT NULL,
    ci_lower              REAL,
    ci_upper_text         TEXT    NOT NULL,
    ci_upper              REAL,
    p_text                TEXT    NOT NULL,
    p_op                  TEXT    NOT NULL,
    p_value               REAL,
    method                TEXT    NOT NULL,
    statistical_comment   TEXT    NOT NULL,
    estimate_comment      TEXT    NOT NULL,
    non_inferiority_type  TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, analysis_pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE analysis_groups (
    trial_id     TEXT    NOT NULL REFERENCES trials (trial_id) ON DELETE CASCADE,
    outcome_pos  INTEGER NOT NULL,
    analysis_pos INTEGER NOT NULL,
    pos          INTEGER NOT NULL,
    group_id     TEXT    NOT NULL,
    PRIMARY KEY (trial_id, outcome_pos, analysis_pos, pos)
) STRICT, WITHOUT ROWID;

CREATE TABLE reviews (
    review_id       TEXT NOT NULL PRIMARY KEY,
    title           TEXT NOT NULL,
    measure         TEXT NOT NULL,
    outcome         TEXT NOT NULL,
    unit            TEXT NOT NULL,
    better          TEXT NOT NULL,
    timepoint_weeks REAL,
    search_date     TEXT NOT NULL,
    comparator      TEXT NOT NULL,
    mid             REAL,
    source_path     TEXT NOT NULL,
    source_sha256   TEXT NOT NULL,
    source_position TEXT NOT NULL,
    ingested_at     TEXT NOT NULL
) STRICT, WITHOUT ROWID;

-- Per-review lists: kind 'condition' or 'intervention'.
CREATE TABLE review_terms (
    review_id TEXT    NOT NULL REFERENCES reviews (review_id) ON DELETE CASCADE,
    kind      TEXT    NOT NULL CHECK (kind IN ('condition', 'intervention')),
    pos       INTEGER NOT NULL,
    term      TEXT    NOT NULL,
    PRIMARY KEY (review_id, kind, pos)
) STRICT, WITHOUT ROWID;

-- Published studies of a review, in file order (pos).
CREATE TABLE review_studies (
    review_id       TEXT    NOT NULL REFERENCES reviews (review_id) ON DELETE CASCADE,
    pos             INTEGER NOT NULL,
    study           TEXT    NOT NULL,
    registry_id     TEXT    NOT NULL,
    year            INTEGER,
    effect          REAL,
    se              REAL,
    treat_mean      REAL,
    treat_sd        REAL,
    treat_n         INTEGER,
    ctrl_mean       REAL,
    ctrl_sd         REAL,
    ctrl_n          INTEGER,
    note            TEXT    NOT NULL,
    source_path     TEXT    NOT NULL,
    source_sha256   TEXT    NOT NULL,
    source_position TEXT    NOT NULL,
    ingested_at     TEXT    NOT NULL,
    PRIMARY KEY (review_id, pos)
) STRICT, WITHOUT ROWID;

CREATE INDEX review_studies_registry ON review_studies (registry_id) WHERE registry_id <> '';

-- Links between a review and one registry outcome. There is no foreign key
-- to trials: a link outlives a replace of its trial, and may be loaded
-- before the trial. The primary key serves lookups by review.
CREATE TABLE links (
    review_id       TEXT    NOT NULL REFERENCES reviews (review_id) ON DELETE CASCADE,
    trial_id        TEXT    NOT NULL,
    outcome_index   INTEGER NOT NULL,
    flip            INTEGER NOT NULL CHECK (flip IN (0, 1)),
    unit_from       TEXT    NOT NULL,
    decision        TEXT    NOT NULL CHECK (decision IN ('', 'accept', 'reject')),
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

CREATE INDEX links_review ON links (review_id, decision);
CREATE INDEX links_trial ON links (trial_id, outcome_index);

-- Result groups forming each side of a link: role 'treat' or 'ctrl'.
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

CREATE TABLE runs (
    run_id      INTEGER PRIMARY KEY AUTOINCREMENT,
    kind        TEXT    NOT NULL,
    options     TEXT    NOT NULL, -- JSON
    version     TEXT    NOT NULL,
    seed        INTEGER NOT NULL, -- uint64 stored bit for bit as int64
    status      TEXT    NOT NULL CHECK (status IN ('running', 'complete', 'cancelled', 'failed')),
    started_at  TEXT    NOT NULL,
    finished_at TEXT
) STRICT;

CREATE INDEX runs_kind ON runs (kind, run_id);

CREATE TABLE run_results (
    run_id    INTEGER NOT NULL REFERENCES runs (run_id) ON DELETE CASCADE,
    review_id TEXT    NOT NULL,
    result    TEXT    NOT NULL, -- JSON
    PRIMARY KEY (run_id, review_id)
) STRICT, WITHOUT ROWID;
