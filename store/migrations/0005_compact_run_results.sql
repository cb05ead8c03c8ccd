-- Schema version 5: run results stay small. Each review's result is stored
-- as a blob in one of three codecs (see store/runcodec.go): 0 the JSON text
-- as is (rows from earlier versions), 1 deflated JSON, 2 the packed form
-- deflated against the run's dictionary (runs.dict). pos keeps the order
-- in which the results were written (the review order of the output).

CREATE TABLE run_results_v5 (
    run_id    INTEGER NOT NULL REFERENCES runs (run_id) ON DELETE CASCADE,
    review_id TEXT    NOT NULL,
    pos       INTEGER NOT NULL,
    codec     INTEGER NOT NULL CHECK (codec IN (0, 1, 2)),
    data      BLOB    NOT NULL,
    PRIMARY KEY (run_id, review_id)
) STRICT, WITHOUT ROWID;

INSERT INTO run_results_v5 (run_id, review_id, pos, codec, data)
    SELECT run_id, review_id, row_number() OVER (PARTITION BY run_id ORDER BY review_id) - 1, 0, CAST(result AS BLOB)
    FROM run_results;

DROP TABLE run_results;
ALTER TABLE run_results_v5 RENAME TO run_results;

CREATE INDEX run_results_pos ON run_results (run_id, pos);

ALTER TABLE runs ADD COLUMN dict BLOB; -- deflated dictionary of codec 2; NULL when no row uses it
