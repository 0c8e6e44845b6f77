-- cryoledger schema, version 3: each site's time zone (an IANA name such as Europe/London), so the
-- window shows and takes times in the site's local time. Instants stay stored in UTC; a site without
-- one is shown in UTC.
ALTER TABLE sites ADD COLUMN time_zone TEXT;
