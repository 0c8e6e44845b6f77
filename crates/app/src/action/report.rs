//! Saving a report from the window: the same documents, through the same code, as `cryoledger
//! report`, from the fleet audit the window already holds (the command line's default settings).

use super::{Core, ReportRequest};
use crate::describe;
use std::path::PathBuf;

/// A file to save to, chosen with the desktop's save dialog (the XDG desktop portal); None when
/// cancelled or when the desktop offers no dialog.
fn pick_save_file(title: &str, name: &str, csv_too: bool) -> Option<PathBuf> {
    let mut d = rfd::FileDialog::new()
        .set_title(title)
        .set_file_name(name)
        .add_filter("HTML", &["html"]);
    if csv_too {
        d = d.add_filter("CSV (the table alone)", &["csv"]);
    }
    d.save_file()
}

/// A name safe as a file name: letters, digits, '-' and '_' kept, anything else '_'.
fn file_safe(s: &str) -> String {
    s.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect()
}

impl Core {
    /// Write the report `what` to `to` (or where the save dialog says); the outcome is the page's
    /// notice or error.
    pub(super) fn save_report(&mut self, what: &ReportRequest, to: Option<PathBuf>) {
        let Some(fa) = self.fleet_audit.clone() else {
            self.view.error =
                Some("The fleet audit has not finished yet: save the report when it has.".into());
            return;
        };
        let tank_name = |id: i64| {
            self.store
                .tank(store::TankId(id))
                .map(|t| t.spec.name)
                .unwrap_or_default()
        };
        let (title, name, csv_too) = match what {
            ReportRequest::Fill(t) => (
                "Save the fill report",
                format!("fill-{}.html", file_safe(t)),
                false,
            ),
            ReportRequest::Vehicle(v) => (
                "Save the vehicle report",
                format!("vehicle-{}.html", file_safe(v)),
                false,
            ),
            ReportRequest::Statement(id) => (
                "Save the stock statement",
                format!("statement-{}.html", file_safe(&tank_name(*id))),
                true,
            ),
        };
        let Some(path) = to.or_else(|| pick_save_file(title, &name, csv_too)) else {
            return;
        };
        let opts = audit::AuditOptions::default();
        let now = crate::fmt::now_ms();
        let database = self
            .location
            .as_ref()
            .map_or_else(|| "a ledger in memory".to_string(), store::Location::name);
        let written = (|| -> Result<String, report::ReportError> {
            let src = || report::Source::read(self.store.as_ref(), &database, now);
            Ok(match what {
                ReportRequest::Fill(t) => {
                    report::fill_report(self.store.as_ref(), &fa, &opts, &src()?, t)?
                }
                ReportRequest::Vehicle(v) => {
                    report::vehicle_report(self.store.as_ref(), &fa, &opts, &src()?, v, None, None)?
                }
                ReportRequest::Statement(id) => {
                    let (from, to) = report::recent_months(now);
                    let s = report::statement(
                        self.store.as_ref(),
                        &fa,
                        &opts,
                        &report::Scope::Tank(tank_name(*id)),
                        from,
                        to,
                        report::Period::Month,
                    )?;
                    let csv = path
                        .extension()
                        .is_some_and(|e| e.eq_ignore_ascii_case("csv"));
                    if csv { s.csv()? } else { s.html(&src()?) }
                }
            })
        })();
        match written {
            Ok(text) => match std::fs::write(&path, text) {
                Ok(()) => {
                    self.view.error = None;
                    self.view.notice = Some(format!("Saved the report to {}.", path.display()));
                }
                Err(e) => {
                    self.view.error = Some(format!("Cannot write {}: {e}", path.display()));
                }
            },
            Err(e) => self.view.error = Some(format!("The report was not saved: {}", describe(&e))),
        }
    }
}
