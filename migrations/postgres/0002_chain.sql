-- cryoledger schema, version 2, for PostgreSQL (as ../0002_chain.sql): a hash chain over the ledger.
-- Every insert, edit and deletion of a site, tank, reading or delivery appends a link: the SHA-256 of
-- the record's canonical form (its digest) and the SHA-256 of the previous link, the record and its
-- digest (the link).

CREATE TABLE chain (
    seq        BIGINT PRIMARY KEY,
    kind       TEXT NOT NULL CHECK (kind IN ('site', 'tank', 'reading', 'delivery')),
    record_id  BIGINT NOT NULL,
    action     TEXT NOT NULL CHECK (action IN ('adopt', 'insert', 'edit', 'delete')),
    digest     BYTEA NOT NULL,
    link       BYTEA NOT NULL
);
