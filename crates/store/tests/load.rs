//! Load on a shared (PostgreSQL) ledger over loopback: 32 writers, each on its own connection, add
//! 5,000 readings to their own tanks (in imports of 250, as a shift's round sheets arrive) while two
//! of them also edit the same readings again and again. Afterwards every reading is present exactly
//! once, every edit either went through or was refused as a conflict with its message, the edited
//! record's revision counts exactly the edits that went through (no lost update), the history chain
//! verifies, and no other error or deadlock happened. Throughput is printed beside a baseline taken
//! in the same run: the same rows inserted by plain INSERTs, 32 connections, the same batches and the
//! same indexes, with no checks, history or chain. (Expected values: what the test wrote; common
//! practice, no source.)
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Condvar, Mutex};
use std::time::{Duration, Instant};

use common::{PgDatabase, server_or_skip};
use store::*;

const WRITERS: usize = 32;
const PER_WRITER: usize = 5_000;
const BATCH: usize = 250;
const EDITS_PER_EDITOR: usize = 40;
const START_MS: i64 = 1_767_225_600_000; // 2026-01-01T00:00:00Z

/// A meeting point of `n` threads that gives up after a minute, so that a thread that failed makes
/// the others fail too instead of waiting forever (std's `Barrier` has no timeout).
struct Rendezvous {
    state: Mutex<(usize, u64)>,
    met: Condvar,
    n: usize,
}

impl Rendezvous {
    fn new(n: usize) -> Self {
        Self {
            state: Mutex::new((0, 0)),
            met: Condvar::new(),
            n,
        }
    }

    fn wait(&self) -> Result<(), String> {
        let mut g = self.state.lock().map_err(|e| e.to_string())?;
        let round = g.1;
        g.0 += 1;
        if g.0 == self.n {
            *g = (0, round + 1);
            self.met.notify_all();
            return Ok(());
        }
        let (_g, waited) = self
            .met
            .wait_timeout_while(g, Duration::from_secs(60), |g| g.1 == round)
            .map_err(|e| e.to_string())?;
        if waited.timed_out() {
            return Err("another thread never came: see its error".into());
        }
        Ok(())
    }
}

fn readings_csv(tank: &str, from: usize, n: usize) -> String {
    let mut s = String::from("tank,time,dp,dp_unit,pressure,pressure_unit\n");
    for i in from..from + n {
        let ms = START_MS + i as i64 * 600_000;
        s.push_str(&format!(
            "{tank},{},{},inH2O,{},barg\n",
            units::rfc3339_from_ms(ms),
            20.0 + (i % 70) as f64,
            8.0 + (i % 5) as f64 * 0.1
        ));
    }
    s
}

#[test]
fn thirty_two_writers_and_two_editors_lose_nothing() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let db = PgDatabase::new(&server);
    let url = db.url();
    let mut owner = db.store();
    let mut tanks = String::from(
        "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
         Shared Yard,SHARED,nitrogen,vertical,3,10,flat,15\n",
    );
    for w in 0..WRITERS {
        tanks.push_str(&format!(
            "Site {w:02},W-{w:02},nitrogen,vertical,3,10,flat,15\n"
        ));
    }
    owner
        .import(
            ImportSources {
                tanks: Some(ImportSource::text("tanks.csv", &tanks)),
                readings: Some(ImportSource::text("r.csv", &readings_csv("SHARED", 0, 4))),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
    let shared = owner.tank_by_name("SHARED").unwrap();
    // the records both editors change, in turn
    let targets: Vec<ReadingId> = owner
        .readings(shared.id, None)
        .unwrap()
        .iter()
        .map(|r| r.id)
        .collect();
    assert_eq!(targets.len(), 4);

    let edits_done = Arc::new(AtomicU64::new(0));
    // (the note the editor read, the note it wrote) of every edit that went through
    let accepted = Arc::new(Mutex::new(Vec::<(ReadingId, Option<String>, String)>::new()));
    let conflicts = Arc::new(AtomicU64::new(0));
    let start = Arc::new(Rendezvous::new(WRITERS));
    // the two editors read the same revision, then both edit it: one must win, one be refused
    let round = Arc::new(Rendezvous::new(2));
    let t0 = Instant::now();
    let handles: Vec<_> = (0..WRITERS)
        .map(|w| {
            let (url, start) = (url.clone(), Arc::clone(&start));
            let (edits_done, conflicts) = (Arc::clone(&edits_done), Arc::clone(&conflicts));
            let accepted = Arc::clone(&accepted);
            let targets = targets.clone();
            let round = Arc::clone(&round);
            std::thread::spawn(move || -> Result<(), String> {
                let s = PgStore::connect(&url).map_err(|e| e.to_string());
                start.wait()?;
                let mut s = s?;
                let name = format!("W-{w:02}");
                let mut edits = 0;
                for b in 0..PER_WRITER / BATCH {
                    let csv = readings_csv(&name, b * BATCH, BATCH);
                    let n = s
                        .import(
                            ImportSources {
                                readings: Some(ImportSource::text("sheet.csv", &csv)),
                                ..Default::default()
                            },
                            &ImportOptions::default(),
                        )
                        .map_err(|e| format!("writer {w}: {e}"))?;
                    assert_eq!(n.readings, BATCH as u64);
                    // writers 0 and 1 also edit the same reading, made from what they last read
                    while w < 2 && edits < EDITS_PER_EDITOR * (b + 1) / (PER_WRITER / BATCH) {
                        edits += 1;
                        // both read the same revision; editor 0 saves first, editor 1 after it
                        // (from what is by then a stale read: it must be refused, never win)
                        round.wait()?;
                        let target = targets[edits % targets.len()];
                        let r = s.reading(target).map_err(|e| e.to_string())?;
                        round.wait()?;
                        if w == 1 {
                            round.wait()?;
                        }
                        let mut e = r.entry.clone();
                        e.dp.value = 50.0 + w as f64 + edits as f64 / 100.0;
                        e.note = Some(format!("editor {w}, edit {edits}"));
                        match s.edit_reading(target, r.revision, &e, "checked against the sheet") {
                            Ok(()) => {
                                edits_done.fetch_add(1, Ordering::Relaxed);
                                let wrote = e.note.clone().unwrap_or_default();
                                accepted.lock().map_err(|e| e.to_string())?.push((
                                    target,
                                    r.entry.note.clone(),
                                    wrote,
                                ));
                            }
                            Err(StoreError::Conflict(c)) => {
                                let text = StoreError::Conflict(c).to_string();
                                if !text.contains("was changed by someone else") {
                                    return Err(format!("a conflict without its message: {text}"));
                                }
                                conflicts.fetch_add(1, Ordering::Relaxed);
                            }
                            Err(e) => return Err(format!("editor {w}: {e}")),
                        }
                        if w == 0 {
                            round.wait()?;
                        }
                    }
                }
                Ok(())
            })
        })
        .collect();
    for h in handles {
        h.join()
            .expect("a writer panicked")
            .expect("a writer failed");
    }
    let ours = t0.elapsed();

    // every reading present exactly once
    let mut c = postgres::Client::connect(&url, postgres::NoTls).unwrap();
    for w in 0..WRITERS {
        let t = owner.tank_by_name(&format!("W-{w:02}")).unwrap();
        let row = c
            .query_one(
                "SELECT COUNT(*), COUNT(DISTINCT time_ms), MIN(time_ms), MAX(time_ms) FROM readings \
                 WHERE tank_id = $1 AND deleted_at IS NULL",
                &[&t.id.0],
            )
            .unwrap();
        let (n, distinct, lo, hi): (i64, i64, i64, i64) =
            (row.get(0), row.get(1), row.get(2), row.get(3));
        assert_eq!(
            (n, distinct),
            (PER_WRITER as i64, PER_WRITER as i64),
            "W-{w:02}"
        );
        assert_eq!(
            (lo, hi),
            (START_MS, START_MS + (PER_WRITER as i64 - 1) * 600_000)
        );
    }
    // no lost update: the revision counts exactly the edits that went through, each kept in history
    let done = edits_done.load(Ordering::Relaxed);
    let refused = conflicts.load(Ordering::Relaxed);
    assert_eq!(done + refused, 2 * EDITS_PER_EDITOR as u64);
    // each round: editor 0's edit went through, editor 1's (from the same, by then stale, read) not
    assert_eq!(
        (done, refused),
        (EDITS_PER_EDITOR as u64, EDITS_PER_EDITOR as u64)
    );
    let accepted = accepted.lock().unwrap().clone();
    let note = |v: &EarlierVersion| match v {
        EarlierVersion::Reading(r) => r.note.clone(),
        other => panic!("{other:?}"),
    };
    for &target in &targets {
        // the revision counts exactly the edits of this record that went through, each in its history
        let ours: Vec<&(ReadingId, Option<String>, String)> =
            accepted.iter().filter(|a| a.0 == target).collect();
        assert_eq!(ours.len(), EDITS_PER_EDITOR / targets.len());
        let now = owner.reading(target).unwrap();
        assert_eq!(now.revision, 1 + ours.len() as i64);
        let history = owner.history(RecordRef::Reading(target)).unwrap();
        assert_eq!(history.len(), ours.len());
        // each edit that went through replaced the very version its editor had read: the version it
        // replaced (kept in the history) holds the note the editor saw
        for (i, h) in history.iter().enumerate() {
            let wrote = match history.get(i + 1) {
                Some(next) => note(&next.before),
                None => now.entry.note.clone(),
            }
            .expect("every edit writes a note");
            let read = ours
                .iter()
                .find(|a| a.2 == wrote)
                .map(|a| a.1.clone())
                .expect("an accepted edit wrote it");
            assert_eq!(read, note(&h.before), "edit '{wrote}' of reading {target}");
        }
    }
    let v = owner.verify().unwrap();
    assert!(
        v.problems.is_empty(),
        "{:?}",
        &v.problems[..v.problems.len().min(5)]
    );

    // the baseline: the same rows by plain INSERTs into a table with the same indexes
    c.batch_execute(
        "CREATE TABLE readings_baseline (LIKE readings INCLUDING ALL); \
         CREATE UNIQUE INDEX ON readings_baseline (tank_id, time_ms) WHERE deleted_at IS NULL",
    )
    .unwrap();
    let start = Arc::new(Rendezvous::new(WRITERS));
    let t1 = Instant::now();
    let handles: Vec<_> = (0..WRITERS)
        .map(|w| {
            let (url, start) = (url.clone(), Arc::clone(&start));
            std::thread::spawn(move || {
                let mut c = postgres::Client::connect(&url, postgres::NoTls).unwrap();
                let st = c
                    .prepare(
                        "INSERT INTO readings_baseline (tank_id, time_text, time_ms, dp_value, dp_unit, dp_pa, \
                         pressure_value, pressure_unit, pressure_pa) VALUES ($1, $2, $3, $4, 'inH2O', $5, $6, 'barg', $7)",
                    )
                    .unwrap();
                start.wait().unwrap();
                for b in 0..PER_WRITER / BATCH {
                    let mut tx = c.transaction().unwrap();
                    for i in b * BATCH..(b + 1) * BATCH {
                        let ms = START_MS + i as i64 * 600_000;
                        let dp = 20.0 + (i % 70) as f64;
                        let p = 8.0 + (i % 5) as f64 * 0.1;
                        tx.execute(
                            &st,
                            &[&(1000 + w as i64), &units::rfc3339_from_ms(ms), &ms, &dp, &(dp * 249.0), &p, &(p * 1e5)],
                        )
                        .unwrap();
                    }
                    tx.commit().unwrap();
                }
            })
        })
        .collect();
    for h in handles {
        h.join().unwrap();
    }
    let baseline = t1.elapsed();
    let total = (WRITERS * PER_WRITER) as f64;
    println!(
        "load: {} readings by {WRITERS} writers in {:.1} s ({:.0}/s), with {done} edits and {refused} \
         refused as conflicts; baseline plain INSERTs, same batches and indexes: {:.1} s ({:.0}/s); \
         ratio {:.2}",
        total,
        ours.as_secs_f64(),
        total / ours.as_secs_f64(),
        baseline.as_secs_f64(),
        total / baseline.as_secs_f64(),
        ours.as_secs_f64() / baseline.as_secs_f64()
    );
}

/// An edit that passed its check and then waited for the chain's lock while someone else changed the
/// record is refused against the winner's version: the message shows the revision and values stored
/// now, not the ones the loser had read. (The lock is held from a second connection to make the race
/// happen every time; the key is the store's, "cryoledg" in ASCII.)
#[test]
fn an_edit_that_loses_the_race_for_the_lock_is_refused_against_the_winner() {
    let Some(server) = server_or_skip() else {
        return;
    };
    let db = PgDatabase::new(&server);
    let mut owner = db.store();
    owner
        .import(
            ImportSources {
                tanks: Some(ImportSource::text(
                    "tanks.csv",
                    "site,tank,fluid,orientation,diameter_m,length_m,heads,line_temperature_c\n\
                     Race Yard,RY-1,nitrogen,vertical,3,10,flat,15\n",
                )),
                readings: Some(ImportSource::text("r.csv", &readings_csv("RY-1", 0, 1))),
                ..Default::default()
            },
            &ImportOptions::default(),
        )
        .unwrap();
    let t = owner.tank_by_name("RY-1").unwrap();
    let r = owner.readings(t.id, None).unwrap().remove(0);
    const CHAIN_LOCK: i64 = 0x6372_796f_6c65_6467;
    let mut holder = postgres::Client::connect(&db.url(), postgres::NoTls).unwrap();
    holder
        .execute("SELECT pg_advisory_lock($1)", &[&CHAIN_LOCK])
        .unwrap();
    let url = db.url();
    let (id, opened, mut mine) = (r.id, r.revision, r.entry.clone());
    mine.dp.value = 61.5;
    let loser = std::thread::spawn(move || {
        let mut s = PgStore::connect(&url).unwrap();
        s.edit_reading(id, opened, &mine, "mine")
    });
    // the loser has read revision 1 and waits for the lock; the winner changes the record meanwhile
    std::thread::sleep(Duration::from_millis(500));
    holder
        .execute(
            "UPDATE readings SET dp_value = 77.25, revision = revision + 1 WHERE id = $1",
            &[&id.0],
        )
        .unwrap();
    holder
        .execute("SELECT pg_advisory_unlock($1)", &[&CHAIN_LOCK])
        .unwrap();
    let e = loser.join().unwrap().unwrap_err();
    let StoreError::Conflict(c) = &e else {
        panic!("{e:?}")
    };
    assert_eq!((c.opened, c.current), (1, 2), "{e}");
    let text = e.to_string();
    assert!(
        text.contains("Theirs: ") && text.contains("DP 77.25 inH2O"),
        "{text}"
    );
    assert!(
        text.contains("Yours: ") && text.contains("DP 61.5 inH2O"),
        "{text}"
    );
    // nothing of the loser's was written: no earlier version kept, the winner's value stays
    assert!(owner.history(RecordRef::Reading(id)).unwrap().is_empty());
    assert_eq!(owner.reading(id).unwrap().entry.dp.value, 77.25);
}
