-- Schema version 2: fields the registry parser added to its records.

ALTER TABLE trials ADD COLUMN status_verified TEXT NOT NULL DEFAULT ''; -- yyyy-MM

ALTER TABLE outcomes ADD COLUMN units_analyzed TEXT NOT NULL DEFAULT '';   -- '' means participants
ALTER TABLE outcomes ADD COLUMN anticipated_post TEXT NOT NULL DEFAULT ''; -- with NOT_POSTED
ALTER TABLE outcomes ADD COLUMN calculate_pct INTEGER CHECK (calculate_pct IN (0, 1)); -- NULL when not stated

ALTER TABLE analyses ADD COLUMN ci_lower_comment TEXT NOT NULL DEFAULT '';
ALTER TABLE analyses ADD COLUMN ci_upper_comment TEXT NOT NULL DEFAULT '';
ALTER TABLE analyses ADD COLUMN p_comment TEXT NOT NULL DEFAULT '';
ALTER TABLE analyses ADD COLUMN tested_non_inferiority INTEGER CHECK (tested_non_inferiority IN (0, 1)); -- NULL when not stated
ALTER TABLE analyses ADD COLUMN non_inferiority_comment TEXT NOT NULL DEFAULT '';
ALTER TABLE analyses ADD COLUMN other_description TEXT NOT NULL DEFAULT '';
