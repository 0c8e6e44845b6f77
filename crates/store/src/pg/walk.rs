//! Reading a PostgreSQL ledger whole: the current rows of every chained kind with their digests (for
//! verify's walk) and the text dump of every table.

use postgres::Client;

use super::DELIVERY_SELECT;
use crate::StoreError;
use crate::cell::Cells;
use crate::chain::{self, Kind, Rows};
use crate::sqlite::rows::*;

/// The current rows of every chained kind with their digests (as the SQLite walk reads them).
pub(super) fn current(c: &mut Client) -> Result<Rows, StoreError> {
    let mut out = Rows::new();
    let mut buf = String::new();
    for r in c.query(
        &format!("SELECT {SITE_COLUMNS}, deleted_at IS NOT NULL FROM sites"),
        &[],
    )? {
        let site = site_from_row(&r)?;
        chain::canonical_site(&mut buf, &site);
        out.insert(
            (Kind::Site, site.id.0),
            (chain::sha(buf.as_bytes()), r.try_get(6)?),
        );
    }
    let mut tanks = Vec::new();
    for r in c.query(
        &format!(
            "SELECT {TANK_COLUMNS}, t.deleted_at IS NOT NULL FROM tanks t JOIN sites s ON s.id = t.site_id"
        ),
        &[],
    )? {
        tanks.push((tank_from_row(&r)?, r.try_get::<_, bool>(TANK_COLUMN_COUNT)?));
    }
    let at: std::collections::HashMap<i64, usize> = tanks
        .iter()
        .enumerate()
        .map(|(i, (t, _))| (t.id.0, i))
        .collect();
    for p in c.query(
        "SELECT tank_id, level_m, volume_m3 FROM strapping_points ORDER BY tank_id, level_m",
        &[],
    )? {
        if let Some((t, _)) = at.get(&p.int(0)?).and_then(|&i| tanks.get_mut(i)) {
            t.spec.strapping.push((p.real(1)?, p.real(2)?));
        }
    }
    for (t, deleted) in &tanks {
        chain::canonical_tank(&mut buf, t.site_id, &t.spec);
        out.insert((Kind::Tank, t.id.0), (chain::sha(buf.as_bytes()), *deleted));
    }
    let none: [&str; 0] = [];
    let mut rows = c.query_raw(
        &format!("SELECT {READING_COLUMNS}, deleted_at IS NOT NULL FROM readings"),
        none,
    )?;
    while let Some(r) = postgres::fallible_iterator::FallibleIterator::next(&mut rows)? {
        let reading = reading_from_row(&r)?;
        chain::canonical_reading(&mut buf, reading.tank_id, &reading.entry);
        out.insert(
            (Kind::Reading, reading.id.0),
            (chain::sha(buf.as_bytes()), r.try_get(11)?),
        );
    }
    drop(rows);
    for r in c.query(
        &format!("SELECT {DELIVERY_COLUMNS}, d.deleted_at IS NOT NULL {DELIVERY_SELECT}"),
        &[],
    )? {
        let d = delivery_from_row(&r)?;
        chain::canonical_delivery(&mut buf, d.tank_id, &d.entry);
        out.insert(
            (Kind::Delivery, d.id.0),
            (chain::sha(buf.as_bytes()), r.try_get(14)?),
        );
    }
    Ok(out)
}

/// Every table of the ledger's schema with its rows in key order, as text.
pub(super) fn dump(c: &mut Client) -> Result<String, StoreError> {
    use std::fmt::Write as _;
    let mut out = String::new();
    let tables: Vec<String> = c
        .query(
            "SELECT table_name::TEXT FROM information_schema.tables \
             WHERE table_schema = current_schema() AND table_type = 'BASE TABLE' \
             ORDER BY table_name COLLATE \"C\"",
            &[],
        )?
        .iter()
        .map(|r| r.try_get(0))
        .collect::<Result<_, _>>()?;
    for table in tables {
        let rows = c.query(&format!("SELECT * FROM \"{table}\" ORDER BY 1, 2"), &[])?;
        for r in rows {
            let mut vals = Vec::with_capacity(r.len());
            for (i, col) in r.columns().iter().enumerate() {
                use postgres::types::Type;
                let v = match *col.type_() {
                    Type::INT8 => r
                        .try_get::<_, Option<i64>>(i)?
                        .map(|v| format!("Integer({v})")),
                    Type::INT4 => r
                        .try_get::<_, Option<i32>>(i)?
                        .map(|v| format!("Integer({v})")),
                    Type::FLOAT8 => r
                        .try_get::<_, Option<f64>>(i)?
                        .map(|v| format!("Real({v:?})")),
                    Type::TEXT | Type::VARCHAR => r
                        .try_get::<_, Option<String>>(i)?
                        .map(|v| format!("Text({v:?})")),
                    Type::BYTEA => r
                        .try_get::<_, Option<Vec<u8>>>(i)?
                        .map(|v| format!("Blob({})", chain::hex(&v))),
                    Type::BOOL => r
                        .try_get::<_, Option<bool>>(i)?
                        .map(|v| format!("Bool({v})")),
                    ref other => Some(format!("<{other}>")),
                };
                vals.push(v.unwrap_or_else(|| "Null".into()));
            }
            let _ = writeln!(out, "{table}: {}", vals.join(", "));
        }
    }
    Ok(out)
}
