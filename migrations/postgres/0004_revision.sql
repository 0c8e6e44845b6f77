-- cryoledger schema, version 4, for PostgreSQL (as ../0004_revision.sql): every record carries its revision number, 1 when written and one more
-- at each edit or deletion. An edit names the revision it was made from and is refused when the
-- record has moved on since (someone else changed it), so no change overwrites another unseen.
-- Records already edited start at 1 + the earlier versions their history keeps.

ALTER TABLE sites ADD COLUMN revision BIGINT NOT NULL DEFAULT 1;
ALTER TABLE tanks ADD COLUMN revision BIGINT NOT NULL DEFAULT 1;
ALTER TABLE readings ADD COLUMN revision BIGINT NOT NULL DEFAULT 1;
ALTER TABLE deliveries ADD COLUMN revision BIGINT NOT NULL DEFAULT 1;

UPDATE sites SET revision = 1 + (SELECT COUNT(*) FROM revisions r
    WHERE r.table_name = 'sites' AND r.row_id = sites.id);
UPDATE tanks SET revision = 1 + (SELECT COUNT(*) FROM revisions r
    WHERE r.table_name = 'tanks' AND r.row_id = tanks.id);
UPDATE readings SET revision = 1 + (SELECT COUNT(*) FROM revisions r
    WHERE r.table_name = 'readings' AND r.row_id = readings.id)
    WHERE id IN (SELECT row_id FROM revisions WHERE table_name = 'readings');
UPDATE deliveries SET revision = 1 + (SELECT COUNT(*) FROM revisions r
    WHERE r.table_name = 'deliveries' AND r.row_id = deliveries.id)
    WHERE id IN (SELECT row_id FROM revisions WHERE table_name = 'deliveries');
