-- cryoledger schema, version 5, for PostgreSQL (as ../0005_access.sql): which sites each user is
-- responsible for, enforced by the server for every connection, whatever SQL it sends.
--
-- Three group roles (shared by every ledger on the server; users are login roles made members of one
-- by `cryoledger users`):
--   cryoledger_operator  sees the sites it is given and their tanks, readings and deliveries; enters
--                        and edits readings there; nothing else
--   cryoledger_auditor   reads everything; imports and corrects deliveries (vehicles and carriers)
--   cryoledger_admin     everything: sites, tanks, users
-- Row-level security (PostgreSQL docs, "Row Security Policies") filters each table by the user's
-- sites; a policy's subquery on another table is itself filtered, so "tanks I may see" is simply
-- `SELECT id FROM tanks`. The ledger's owner and superusers are not filtered (they run migrations).

CREATE TABLE site_access (
    user_name  TEXT NOT NULL,
    site_id    BIGINT NOT NULL REFERENCES sites(id),
    PRIMARY KEY (user_name, site_id)
);

DO $$
BEGIN
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'cryoledger_operator') THEN
        CREATE ROLE cryoledger_operator NOLOGIN;
    END IF;
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'cryoledger_auditor') THEN
        CREATE ROLE cryoledger_auditor NOLOGIN;
    END IF;
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'cryoledger_admin') THEN
        CREATE ROLE cryoledger_admin NOLOGIN;
    END IF;
END
$$;

-- what each may do at all (table privileges), before which rows (policies)
GRANT SELECT ON sites, tanks, strapping_points, readings, deliveries, carriers,
    vehicles, revisions, chain, site_access
    TO cryoledger_operator, cryoledger_auditor, cryoledger_admin;
GRANT INSERT, UPDATE ON readings TO cryoledger_operator, cryoledger_admin;
GRANT INSERT ON revisions, chain TO cryoledger_operator, cryoledger_auditor, cryoledger_admin;
GRANT INSERT, UPDATE ON deliveries, carriers, vehicles TO cryoledger_auditor, cryoledger_admin;
GRANT INSERT, UPDATE, DELETE ON sites, tanks, strapping_points, site_access TO cryoledger_admin;
DO $$
DECLARE t TEXT;
BEGIN
    FOREACH t IN ARRAY ARRAY['sites', 'carriers', 'vehicles', 'tanks', 'readings', 'deliveries', 'revisions'] LOOP
        EXECUTE format('GRANT USAGE ON SEQUENCE %s TO cryoledger_operator, cryoledger_auditor, cryoledger_admin',
                       pg_get_serial_sequence(t, 'id'));
    END LOOP;
END
$$;

-- the schema version is no secret: every user reads it on connecting (cryoledger keeps it in a table
-- of its own, made before the first migration)
DO $$
BEGIN
    IF to_regclass('cryoledger_schema') IS NOT NULL THEN
        GRANT SELECT ON cryoledger_schema TO PUBLIC;
    END IF;
END
$$;

ALTER TABLE sites ENABLE ROW LEVEL SECURITY;
ALTER TABLE site_access ENABLE ROW LEVEL SECURITY;
ALTER TABLE tanks ENABLE ROW LEVEL SECURITY;
ALTER TABLE strapping_points ENABLE ROW LEVEL SECURITY;
ALTER TABLE readings ENABLE ROW LEVEL SECURITY;
ALTER TABLE deliveries ENABLE ROW LEVEL SECURITY;
ALTER TABLE revisions ENABLE ROW LEVEL SECURITY;
ALTER TABLE chain ENABLE ROW LEVEL SECURITY;

-- auditors and admins: every row (their table privileges say what they may do with it)
CREATE POLICY whole_ledger ON sites TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON site_access TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON tanks TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON strapping_points TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON readings TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON deliveries TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON revisions TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);
CREATE POLICY whole_ledger ON chain TO cryoledger_auditor, cryoledger_admin USING (true) WITH CHECK (true);

-- operators: their own sites, and what hangs from them
CREATE POLICY own_access ON site_access FOR SELECT TO cryoledger_operator
    USING (user_name = current_user);
CREATE POLICY own_sites ON sites FOR SELECT TO cryoledger_operator
    USING (id IN (SELECT site_id FROM site_access WHERE user_name = current_user));
CREATE POLICY own_tanks ON tanks FOR SELECT TO cryoledger_operator
    USING (site_id IN (SELECT id FROM sites));
CREATE POLICY own_strapping ON strapping_points FOR SELECT TO cryoledger_operator
    USING (tank_id IN (SELECT id FROM tanks));
CREATE POLICY own_readings ON readings FOR SELECT TO cryoledger_operator
    USING (tank_id IN (SELECT id FROM tanks));
CREATE POLICY enter_readings ON readings FOR INSERT TO cryoledger_operator
    WITH CHECK (tank_id IN (SELECT id FROM tanks));
CREATE POLICY edit_readings ON readings FOR UPDATE TO cryoledger_operator
    USING (tank_id IN (SELECT id FROM tanks)) WITH CHECK (tank_id IN (SELECT id FROM tanks));
CREATE POLICY own_deliveries ON deliveries FOR SELECT TO cryoledger_operator
    USING (tank_id IN (SELECT id FROM tanks));
CREATE POLICY own_history ON revisions FOR SELECT TO cryoledger_operator
    USING ((table_name = 'readings' AND row_id IN (SELECT id FROM readings))
        OR (table_name = 'deliveries' AND row_id IN (SELECT id FROM deliveries))
        OR (table_name = 'tanks' AND row_id IN (SELECT id FROM tanks))
        OR (table_name = 'sites' AND row_id IN (SELECT id FROM sites)));
CREATE POLICY reading_history ON revisions FOR INSERT TO cryoledger_operator
    WITH CHECK (table_name = 'readings' AND row_id IN (SELECT id FROM readings));
-- the chain holds digests, never values: every writer reads its head and appends links of its own kind
CREATE POLICY chain_head ON chain FOR SELECT TO cryoledger_operator USING (true);
CREATE POLICY reading_links ON chain FOR INSERT TO cryoledger_operator
    WITH CHECK (kind = 'reading' AND record_id IN (SELECT id FROM readings));
