-- cryoledger schema, version 3, for PostgreSQL (as ../0003_site_time_zone.sql): each site's IANA
-- time zone; instants stay stored in UTC.
ALTER TABLE sites ADD COLUMN time_zone TEXT;
