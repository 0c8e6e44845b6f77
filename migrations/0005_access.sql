-- cryoledger schema, version 5: which sites each user of a shared ledger is responsible for. A
-- PostgreSQL server enforces it (roles and row-level security, postgres/0005_access.sql); a SQLite
-- file has one user and keeps the table empty, so that both schemas hold the same records and a
-- ledger copies between them whole.

CREATE TABLE site_access (
    user_name  TEXT NOT NULL,
    site_id    INTEGER NOT NULL REFERENCES sites(id),
    PRIMARY KEY (user_name, site_id)
);
