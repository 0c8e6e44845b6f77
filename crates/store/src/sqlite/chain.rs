//! The hash chain in SQLite (the links and their walk are [`crate::chain`]'s).

use std::collections::HashMap;

use rusqlite::{Connection, params};

use super::rows::*;
use crate::StoreError;
pub(crate) use crate::chain::*;
use crate::records::*;

/// Appends links inside one transaction, keeping the chain's head in memory.
pub(crate) struct ChainWriter {
    head: [u8; 32],
    buf: String,
}

impl ChainWriter {
    /// Start from the chain's current head.
    pub(crate) fn new(conn: &Connection) -> Result<Self, StoreError> {
        Ok(Self {
            head: head(conn)?,
            buf: String::with_capacity(256),
        })
    }

    /// Append a link for a record whose canonical form `fill` writes (none for a deletion).
    pub(crate) fn append(
        &mut self,
        conn: &Connection,
        kind: Kind,
        id: i64,
        action: Action,
        fill: impl FnOnce(&mut String),
    ) -> Result<(), StoreError> {
        let (digest, link) = next_link(&self.head, &mut self.buf, kind, id, action, fill);
        conn.prepare_cached(
            "INSERT INTO chain (kind, record_id, action, digest, link) VALUES (?1, ?2, ?3, ?4, ?5)",
        )?
        .execute(params![
            kind.as_str(),
            id,
            action.as_str(),
            digest,
            link.to_vec()
        ])?;
        self.head = link;
        Ok(())
    }
}

/// The chain's head (32 zero bytes before the first link).
pub(crate) fn head(conn: &Connection) -> Result<[u8; 32], StoreError> {
    let last: Option<Vec<u8>> = conn
        .query_row(
            "SELECT link FROM chain ORDER BY seq DESC LIMIT 1",
            [],
            |r| r.get(0),
        )
        .map(Some)
        .or_else(|e| match e {
            rusqlite::Error::QueryReturnedNoRows => Ok(None),
            e => Err(e),
        })?;
    Ok(match last {
        Some(v) => v.try_into().unwrap_or([0xff; 32]),
        None => [0; 32],
    })
}

/// The current rows of every chained kind with their digests.
fn current(conn: &Connection) -> Result<Rows, StoreError> {
    let mut out = HashMap::new();
    let mut buf = String::new();
    let mut st = conn.prepare(
        "SELECT id, name, elevation_m, barometer_kpa, deleted_at IS NOT NULL, time_zone, revision \
         FROM sites",
    )?;
    let mut rows = st.query([])?;
    while let Some(r) = rows.next()? {
        let site = Site {
            id: SiteId(r.get(0)?),
            name: r.get(1)?,
            elevation_m: r.get(2)?,
            barometer_kpa: r.get(3)?,
            time_zone: r.get(5)?,
            revision: r.get(6)?,
        };
        canonical_site(&mut buf, &site);
        out.insert((Kind::Site, site.id.0), (sha(buf.as_bytes()), r.get(4)?));
    }
    let sql = format!(
        "SELECT {TANK_COLUMNS}, t.deleted_at IS NOT NULL FROM tanks t JOIN sites s ON s.id = t.site_id"
    );
    let mut st = conn.prepare(&sql)?;
    let mut tanks: Vec<(TankRecord, bool)> = st
        .query_map([], |r| {
            Ok((tank_from_row(r)?, r.get::<_, bool>(TANK_COLUMN_COUNT)?))
        })?
        .collect::<Result<_, _>>()?;
    let mut sp = conn.prepare(
        "SELECT tank_id, level_m, volume_m3 FROM strapping_points ORDER BY tank_id, level_m",
    )?;
    let points = sp.query_map([], |r| {
        Ok((
            r.get::<_, i64>(0)?,
            r.get::<_, f64>(1)?,
            r.get::<_, f64>(2)?,
        ))
    })?;
    // each point to its tank through a map (a search per point is quadratic in a fleet with many
    // strapping tables)
    let at: HashMap<i64, usize> = tanks
        .iter()
        .enumerate()
        .map(|(i, (t, _))| (t.id.0, i))
        .collect();
    for p in points {
        let (id, l, v) = p?;
        if let Some((t, _)) = at.get(&id).and_then(|&i| tanks.get_mut(i)) {
            t.spec.strapping.push((l, v));
        }
    }
    for (t, deleted) in &tanks {
        canonical_tank(&mut buf, t.site_id, &t.spec);
        out.insert((Kind::Tank, t.id.0), (sha(buf.as_bytes()), *deleted));
    }
    let sql = format!("SELECT {READING_COLUMNS}, deleted_at IS NOT NULL FROM readings");
    let mut st = conn.prepare(&sql)?;
    let mut rows = st.query([])?;
    while let Some(r) = rows.next()? {
        let reading = reading_from_row(r)?;
        canonical_reading(&mut buf, reading.tank_id, &reading.entry);
        out.insert(
            (Kind::Reading, reading.id.0),
            (sha(buf.as_bytes()), r.get(11)?),
        );
    }
    let sql = format!(
        "SELECT {DELIVERY_COLUMNS}, d.deleted_at IS NOT NULL FROM deliveries d \
         JOIN carriers c ON c.id = d.carrier_id JOIN vehicles v ON v.id = d.vehicle_id"
    );
    let mut st = conn.prepare(&sql)?;
    let mut rows = st.query([])?;
    while let Some(r) = rows.next()? {
        let d = delivery_from_row(r)?;
        canonical_delivery(&mut buf, d.tank_id, &d.entry);
        out.insert((Kind::Delivery, d.id.0), (sha(buf.as_bytes()), r.get(14)?));
    }
    Ok(out)
}

/// Adopt every record the chain does not know yet (a database from before the chain): one link each,
/// at the first open after the upgrade. Nothing happens when the chain already has links.
pub(crate) fn adopt_existing(conn: &Connection) -> Result<(), StoreError> {
    let links: i64 = conn.query_row("SELECT COUNT(*) FROM chain", [], |r| r.get(0))?;
    if links > 0 {
        return Ok(());
    }
    let rows = current(conn)?;
    if rows.is_empty() {
        return Ok(());
    }
    let mut keys: Vec<&(Kind, i64)> = rows.keys().collect();
    keys.sort();
    let mut head = [0u8; 32];
    let mut st = conn.prepare(
        "INSERT INTO chain (kind, record_id, action, digest, link) VALUES (?1, ?2, ?3, ?4, ?5)",
    )?;
    for key in keys {
        let (digest, _) = rows[key];
        let link = link_of(&head, key.0, key.1, Action::Adopt, &digest);
        st.execute(params![
            key.0.as_str(),
            key.1,
            Action::Adopt.as_str(),
            digest.to_vec(),
            link.to_vec()
        ])?;
        head = link;
    }
    Ok(())
}

/// Walk the chain and the current rows (the links streamed, not held).
pub(crate) fn verify(conn: &Connection) -> Result<Verification, StoreError> {
    let current = current(conn)?;
    let mut st =
        conn.prepare("SELECT seq, kind, record_id, action, digest, link FROM chain ORDER BY seq")?;
    let links = st.query_map([], |r| {
        Ok(ChainLink {
            seq: r.get(0)?,
            kind: r.get(1)?,
            record_id: r.get(2)?,
            action: r.get(3)?,
            digest: r.get(4)?,
            link: r.get(5)?,
        })
    })?;
    walk(links.map(|l| l.map_err(StoreError::from)), &current)
}
