-- Schema version 3: the bulk-zip entry a trial was read from, by its
-- checksum, so that a re-download can recognise unchanged entries without
-- inflating them.

ALTER TABLE trials ADD COLUMN source_crc32 INTEGER; -- the entry's CRC-32; NULL when not read from a zip
ALTER TABLE trials ADD COLUMN source_size INTEGER;  -- the entry's inflated size in bytes; NULL likewise
