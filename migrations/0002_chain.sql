-- cryoledger schema, version 2: a hash chain over the ledger.
-- Every insert, edit and deletion of a site, tank, reading or delivery appends a link: the SHA-256 of
-- the record's canonical form (its digest) and the SHA-256 of the previous link, the record and its
-- digest (the link). `cryoledger verify` recomputes both and names every record changed, added or
-- removed outside cryoledger. Records present when the chain began are adopted by one link each.

CREATE TABLE chain (
    seq        INTEGER PRIMARY KEY,
    kind       TEXT NOT NULL CHECK (kind IN ('site', 'tank', 'reading', 'delivery')),
    record_id  INTEGER NOT NULL,
    action     TEXT NOT NULL CHECK (action IN ('adopt', 'insert', 'edit', 'delete')),
    digest     BLOB NOT NULL,
    link       BLOB NOT NULL
);
