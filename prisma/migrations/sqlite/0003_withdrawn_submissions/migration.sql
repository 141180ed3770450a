-- A submission can be withdrawn (soft delete): status 'withdrawn' (SQLite).
-- SQLite keeps enums as TEXT, so the new value needs no change to the table; this migration
-- records the schema step so both providers share one migration history.
SELECT 1;
