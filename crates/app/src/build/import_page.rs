//! The import page: the chosen files read as the importer will read them (header and first rows), and
//! the sources for a check or an import (the store's importer, all or nothing).

use store::{ImportSource, ImportSources, StoreError};

use crate::view::ImportFileView;

/// Rows shown per file.
pub const PREVIEW_ROWS: usize = 5;

/// Each chosen file's header and first rows; a file that cannot be read or parsed is an error that
/// names it.
pub fn import_preview(paths: &[String; 3]) -> (Vec<ImportFileView>, Vec<String>) {
    let mut files = Vec::new();
    let mut errors = Vec::new();
    for (kind, path) in paths.iter().enumerate() {
        let path = path.trim();
        if path.is_empty() {
            continue;
        }
        let text = match std::fs::read(path) {
            Ok(b) => b,
            Err(e) => {
                errors.push(format!("{path}: cannot be read: {e}"));
                continue;
            }
        };
        let mut r = csv::ReaderBuilder::new()
            .flexible(true)
            .from_reader(text.as_slice());
        let header: Vec<String> = match r.headers() {
            Ok(h) => h
                .iter()
                .map(|c| c.trim_start_matches('\u{feff}').to_owned())
                .collect(),
            Err(e) => {
                errors.push(format!("{path}: {e}"));
                continue;
            }
        };
        let mut rows = Vec::new();
        let mut row_count = 0;
        for rec in r.records() {
            match rec {
                Ok(rec) => {
                    if rows.len() < PREVIEW_ROWS {
                        rows.push(rec.iter().map(str::to_owned).collect());
                    }
                    row_count += 1;
                }
                Err(e) => {
                    errors.push(format!("{path}: {e}"));
                    break;
                }
            }
        }
        files.push(ImportFileView {
            kind,
            path: path.to_owned(),
            header,
            rows,
            row_count,
        });
    }
    (files, errors)
}

/// The chosen files as import sources, in the importer's order (tanks, readings, deliveries).
pub fn import_sources(paths: &[String; 3]) -> Result<ImportSources<'static>, StoreError> {
    let open = |k: usize| -> Result<Option<ImportSource<'static>>, StoreError> {
        let p = paths[k].trim();
        if p.is_empty() {
            Ok(None)
        } else {
            ImportSource::open(std::path::Path::new(p)).map(Some)
        }
    };
    Ok(ImportSources {
        tanks: open(0)?,
        readings: open(1)?,
        deliveries: open(2)?,
    })
}

/// A CSV file picked with the desktop's file dialog (the XDG desktop portal); None when cancelled
/// or when the desktop offers no dialog (the path can always be typed).
pub fn pick_csv_file(kind: &str) -> Option<String> {
    rfd::FileDialog::new()
        .set_title(format!("{kind} file to import"))
        .add_filter("CSV", &["csv", "CSV", "txt"])
        .pick_file()
        .map(|p| p.display().to_string())
}
