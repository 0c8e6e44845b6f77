//! The hash chain over the ledger, whatever database holds it: a link for every insert, edit and
//! deletion of a site, tank, reading or delivery, and the walk that verifies the chain and the current
//! rows against each other.
//!
//! A record's digest is the SHA-256 (FIPS 180-4, through the `sha2` crate) of its canonical form: its
//! stored fields, as the domain records hold them, joined by the unit separator (0x1F), numbers in
//! Rust's shortest round-trip form. A link is the SHA-256 of the previous link, the record's kind, id,
//! the action and its digest. Changing, adding or removing a row with any other tool leaves a row whose
//! digest is not its chain's, a row with no link, or a link with no row.

use std::collections::HashMap;
use std::fmt::Write as _;

use sha2::{Digest, Sha256};

use crate::records::*;

/// One kind of chained record.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub(crate) enum Kind {
    Site,
    Tank,
    Reading,
    Delivery,
}

impl Kind {
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Kind::Site => "site",
            Kind::Tank => "tank",
            Kind::Reading => "reading",
            Kind::Delivery => "delivery",
        }
    }
    pub(crate) fn parse(s: &str) -> Option<Kind> {
        Some(match s {
            "site" => Kind::Site,
            "tank" => Kind::Tank,
            "reading" => Kind::Reading,
            "delivery" => Kind::Delivery,
            _ => return None,
        })
    }
}

/// What a link records.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Action {
    /// Present when the chain began.
    Adopt,
    Insert,
    Edit,
    Delete,
}

impl Action {
    pub(crate) fn as_str(self) -> &'static str {
        match self {
            Action::Adopt => "adopt",
            Action::Insert => "insert",
            Action::Edit => "edit",
            Action::Delete => "delete",
        }
    }
}

const SEP: char = '\u{1f}';

fn num(out: &mut String, v: f64) {
    let _ = write!(out, "{v:?}{SEP}");
}

fn opt(out: &mut String, v: Option<f64>) {
    match v {
        Some(v) => num(out, v),
        None => out.push(SEP),
    }
}

/// An optional entered pressure: its value, then its unit's symbol (empty when absent).
fn opt_entered(out: &mut String, v: Option<units::Entered<units::TankPressureUnit>>) {
    opt(out, v.map(|p| p.value));
    text(out, v.map(|p| units::Unit::symbol(p.unit)).unwrap_or(""));
}

fn text(out: &mut String, s: &str) {
    out.push_str(s);
    out.push(SEP);
}

/// Canonical forms, written into `out` (cleared first).
pub(crate) fn canonical_site(out: &mut String, s: &Site) {
    out.clear();
    text(out, &s.name);
    opt(out, s.elevation_m);
    opt(out, s.barometer_kpa);
    // added with schema 3: a site without a time zone keeps the canonical form it had before
    if let Some(z) = &s.time_zone {
        text(out, z);
    }
}

pub(crate) fn canonical_tank(out: &mut String, site: SiteId, t: &TankSpec) {
    out.clear();
    let _ = write!(out, "{}{SEP}", site.0);
    text(out, &t.name);
    text(out, t.fluid.name());
    text(out, t.orientation.as_str());
    num(out, t.diameter_m);
    num(out, t.length_m);
    text(out, t.heads.as_str());
    opt(out, t.crown_ratio);
    opt(out, t.knuckle_ratio);
    num(out, t.line_temperature_c);
    text(out, units::Unit::symbol(t.dp_unit));
    opt(out, t.gauge_span);
    opt(out, t.gauge_accuracy_percent);
    opt_entered(out, t.relief_pressure);
    opt(out, t.reorder_percent);
    opt(out, t.ner_percent_per_day);
    for (l, v) in &t.strapping {
        num(out, *l);
        num(out, *v);
    }
}

pub(crate) fn canonical_reading(out: &mut String, tank: TankId, r: &ReadingEntry) {
    out.clear();
    let _ = write!(out, "{}{SEP}{}{SEP}{}{SEP}", tank.0, r.time.text, r.time.ms);
    num(out, r.dp.value);
    text(out, units::Unit::symbol(r.dp.unit));
    num(out, r.pressure.value);
    text(out, units::Unit::symbol(r.pressure.unit));
    opt(out, r.liquid_temperature_k);
    text(out, r.note.as_deref().unwrap_or(""));
}

pub(crate) fn canonical_delivery(out: &mut String, tank: TankId, d: &DeliveryEntry) {
    out.clear();
    let _ = write!(out, "{}{SEP}", tank.0);
    text(out, &d.ticket);
    let _ = write!(out, "{}{SEP}{}{SEP}", d.start.text, d.start.ms);
    let _ = write!(out, "{}{SEP}{}{SEP}", d.end.text, d.end.ms);
    num(out, d.quantity.value);
    text(out, units::Unit::symbol(d.quantity.unit));
    text(out, &d.carrier);
    text(out, &d.vehicle);
    opt_entered(out, d.supply_pressure);
}

pub(crate) fn sha(bytes: &[u8]) -> [u8; 32] {
    Sha256::digest(bytes).into()
}

pub(crate) fn link_of(
    prev: &[u8; 32],
    kind: Kind,
    id: i64,
    action: Action,
    digest: &[u8],
) -> [u8; 32] {
    let mut h = Sha256::new();
    h.update(prev);
    h.update(kind.as_str().as_bytes());
    h.update(id.to_le_bytes());
    h.update(action.as_str().as_bytes());
    h.update(digest);
    h.finalize().into()
}

/// The digest (empty for a deletion) and the link that follow `head` for a record whose canonical
/// form `fill` writes into `buf`.
pub(crate) fn next_link(
    head: &[u8; 32],
    buf: &mut String,
    kind: Kind,
    id: i64,
    action: Action,
    fill: impl FnOnce(&mut String),
) -> (Vec<u8>, [u8; 32]) {
    let digest: Vec<u8> = if action == Action::Delete {
        Vec::new()
    } else {
        fill(buf);
        sha(buf.as_bytes()).to_vec()
    };
    let link = link_of(head, kind, id, action, &digest);
    (digest, link)
}

pub(crate) fn hex(b: &[u8]) -> String {
    b.iter()
        .fold(String::with_capacity(2 * b.len()), |mut s, x| {
            let _ = write!(s, "{x:02x}");
            s
        })
}

/// One problem `verify` found.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Tampering {
    /// The record (its kind and id), or None for the chain itself.
    pub record: Option<(String, i64)>,
    /// What is wrong, in words.
    pub what: String,
}

/// What a verify walk found.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Verification {
    /// Records checked (rows of sites, tanks, readings and deliveries).
    pub records: usize,
    /// Links walked.
    pub links: usize,
    /// The chain's head (hex).
    pub head: String,
    /// Every problem, in the order records are listed.
    pub problems: Vec<Tampering>,
}

/// One stored link, as read from the `chain` table.
pub(crate) struct ChainLink {
    pub seq: i64,
    pub kind: String,
    pub record_id: i64,
    pub action: String,
    pub digest: Vec<u8>,
    pub link: Vec<u8>,
}

/// Every current row of every chained kind: (kind, id) -> (digest, deleted).
pub(crate) type Rows = HashMap<(Kind, i64), ([u8; 32], bool)>;

/// Walk the chain's links in order, as the database streams them, against the current rows (whatever
/// database they came from). Only each record's latest link is kept (whether it is a deletion, and its
/// digest), so a ledger of millions of records is walked in a few hundred MB.
pub(crate) fn walk(
    chain: impl IntoIterator<Item = Result<ChainLink, crate::StoreError>>,
    current: &Rows,
) -> Result<Verification, crate::StoreError> {
    let mut problems = Vec::new();
    // (deleted, digest) of each record's latest link; a digest of the wrong length reads as all ones,
    // which no record's digest equals
    let mut latest: HashMap<(Kind, i64), (bool, [u8; 32])> = HashMap::with_capacity(current.len());
    let mut prev = [0u8; 32];
    let mut links = 0;
    let mut broken = false;
    for link in chain {
        let ChainLink {
            seq,
            kind: kind_text,
            record_id: id,
            action: action_text,
            digest,
            link,
        } = link?;
        links += 1;
        let (Some(kind), Some(action)) = (
            Kind::parse(&kind_text),
            match action_text.as_str() {
                "adopt" => Some(Action::Adopt),
                "insert" => Some(Action::Insert),
                "edit" => Some(Action::Edit),
                "delete" => Some(Action::Delete),
                _ => None,
            },
        ) else {
            problems.push(Tampering {
                record: None,
                what: format!("link {seq} names an unknown record kind or action"),
            });
            broken = true;
            continue;
        };
        let want = link_of(&prev, kind, id, action, &digest);
        if !broken && want.as_slice() != link.as_slice() {
            problems.push(Tampering {
                record: Some((kind_text.clone(), id)),
                what: format!("the chain was altered at link {seq}: its hash does not follow from the links before it"),
            });
            broken = true;
        }
        prev = link.as_slice().try_into().unwrap_or([0; 32]);
        let chained = digest.as_slice().try_into().unwrap_or([0xff; 32]);
        latest.insert((kind, id), (action == Action::Delete, chained));
    }
    let mut keys: Vec<&(Kind, i64)> = current.keys().chain(latest.keys()).collect();
    keys.sort();
    keys.dedup();
    for key in keys {
        let name = (key.0.as_str().to_owned(), key.1);
        match (current.get(key), latest.get(key)) {
            (Some(_), None) => problems.push(Tampering {
                record: Some(name),
                what: "added outside cryoledger: it has no link in the chain".into(),
            }),
            (None, Some((false, _))) => problems.push(Tampering {
                record: Some(name),
                what: "removed outside cryoledger: the chain has it, the table does not".into(),
            }),
            (None, Some(_)) => problems.push(Tampering {
                record: Some(name),
                what: "removed outside cryoledger after its deletion was recorded".into(),
            }),
            (Some((_, deleted)), Some((chain_deleted, _))) if deleted != chain_deleted => problems
                .push(Tampering {
                    record: Some(name),
                    what: if *deleted {
                        "deleted outside cryoledger: the chain has no deletion".into()
                    } else {
                        "restored outside cryoledger: the chain records its deletion".into()
                    },
                }),
            (Some((digest, deleted)), Some((_, chained)))
                if !deleted && digest.as_slice() != chained.as_slice() =>
            {
                problems.push(Tampering {
                    record: Some(name),
                    what:
                        "changed outside cryoledger: its values are not the ones the chain recorded"
                            .into(),
                })
            }
            _ => {}
        }
    }
    Ok(Verification {
        records: current.len(),
        links,
        head: hex(&prev),
        problems,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A site without a time zone keeps the canonical form it had before schema 3 (name, elevation,
    /// barometer, each followed by U+001F), so chains written before the time zone existed still
    /// verify; one with a zone appends it. The expected texts are written out by hand.
    #[test]
    fn a_site_without_a_zone_keeps_its_earlier_canonical_form() {
        let mut site = Site {
            id: SiteId(1),
            name: "Yard".into(),
            elevation_m: None,
            barometer_kpa: Some(101.3),
            time_zone: None,
            revision: 1,
        };
        let mut out = String::new();
        canonical_site(&mut out, &site);
        assert_eq!(out, "Yard\u{1f}\u{1f}101.3\u{1f}");
        site.time_zone = Some("Europe/London".into());
        canonical_site(&mut out, &site);
        assert_eq!(out, "Yard\u{1f}\u{1f}101.3\u{1f}Europe/London\u{1f}");
    }
}
