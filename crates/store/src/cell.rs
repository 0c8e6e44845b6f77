//! Values and rows as both databases see them: one written value ([`Cell`]) bound by SQLite and by
//! PostgreSQL alike, and one read row ([`Cells`]) from either, so that each record kind maps to its
//! columns in one place.

use std::error::Error;

/// One value written to a column, typed as the column is (a NULL keeps its column's type, which
/// PostgreSQL needs to bind it).
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Cell {
    /// BIGINT / INTEGER.
    Int(i64),
    /// DOUBLE PRECISION / REAL.
    Real(f64),
    /// TEXT.
    Text(String),
    /// A nullable DOUBLE PRECISION / REAL.
    MaybeReal(Option<f64>),
    /// A nullable TEXT.
    MaybeText(Option<String>),
}

impl From<i64> for Cell {
    fn from(v: i64) -> Self {
        Cell::Int(v)
    }
}
impl From<f64> for Cell {
    fn from(v: f64) -> Self {
        Cell::Real(v)
    }
}
impl From<String> for Cell {
    fn from(v: String) -> Self {
        Cell::Text(v)
    }
}
impl From<&str> for Cell {
    fn from(v: &str) -> Self {
        Cell::Text(v.to_owned())
    }
}
impl From<Option<f64>> for Cell {
    fn from(v: Option<f64>) -> Self {
        Cell::MaybeReal(v)
    }
}
impl From<Option<String>> for Cell {
    fn from(v: Option<String>) -> Self {
        Cell::MaybeText(v)
    }
}
impl From<Option<&str>> for Cell {
    fn from(v: Option<&str>) -> Self {
        Cell::MaybeText(v.map(str::to_owned))
    }
}

impl rusqlite::ToSql for Cell {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        match self {
            Cell::Int(v) => v.to_sql(),
            Cell::Real(v) => v.to_sql(),
            Cell::Text(v) => v.to_sql(),
            Cell::MaybeReal(v) => v.to_sql(),
            Cell::MaybeText(v) => v.to_sql(),
        }
    }
}

impl postgres::types::ToSql for Cell {
    fn to_sql(
        &self,
        ty: &postgres::types::Type,
        out: &mut postgres::types::private::BytesMut,
    ) -> Result<postgres::types::IsNull, Box<dyn Error + Sync + Send>> {
        // each value only into a column of its own type (an integer's bytes read as a double would
        // be a different number, silently)
        let fits = match self {
            Cell::Int(_) => <i64 as postgres::types::ToSql>::accepts(ty),
            Cell::Real(_) | Cell::MaybeReal(_) => <f64 as postgres::types::ToSql>::accepts(ty),
            Cell::Text(_) | Cell::MaybeText(_) => <String as postgres::types::ToSql>::accepts(ty),
        };
        if !fits {
            return Err(format!("{self:?} does not fit a column of type {ty}").into());
        }
        match self {
            Cell::Int(v) => v.to_sql(ty, out),
            Cell::Real(v) => v.to_sql(ty, out),
            Cell::Text(v) => v.to_sql(ty, out),
            Cell::MaybeReal(v) => v.to_sql(ty, out),
            Cell::MaybeText(v) => v.to_sql(ty, out),
        }
    }

    fn accepts(ty: &postgres::types::Type) -> bool {
        <i64 as postgres::types::ToSql>::accepts(ty)
            || <f64 as postgres::types::ToSql>::accepts(ty)
            || <String as postgres::types::ToSql>::accepts(ty)
    }

    postgres::types::to_sql_checked!();
}

/// One row read from either database, by column index.
pub(crate) trait Cells {
    /// The database's error.
    type Error;
    fn int(&self, i: usize) -> Result<i64, Self::Error>;
    fn real(&self, i: usize) -> Result<f64, Self::Error>;
    fn opt_real(&self, i: usize) -> Result<Option<f64>, Self::Error>;
    fn text(&self, i: usize) -> Result<String, Self::Error>;
    fn opt_text(&self, i: usize) -> Result<Option<String>, Self::Error>;
    /// A stored value that does not decode (an unknown unit, fluid, ...).
    fn bad(i: usize, why: String) -> Self::Error;
}

impl Cells for rusqlite::Row<'_> {
    type Error = rusqlite::Error;
    fn int(&self, i: usize) -> rusqlite::Result<i64> {
        self.get(i)
    }
    fn real(&self, i: usize) -> rusqlite::Result<f64> {
        self.get(i)
    }
    fn opt_real(&self, i: usize) -> rusqlite::Result<Option<f64>> {
        self.get(i)
    }
    fn text(&self, i: usize) -> rusqlite::Result<String> {
        self.get(i)
    }
    fn opt_text(&self, i: usize) -> rusqlite::Result<Option<String>> {
        self.get(i)
    }
    fn bad(i: usize, why: String) -> rusqlite::Error {
        rusqlite::Error::FromSqlConversionFailure(
            i,
            rusqlite::types::Type::Text,
            Box::<dyn Error + Send + Sync>::from(why),
        )
    }
}

impl Cells for postgres::Row {
    type Error = crate::StoreError;
    fn int(&self, i: usize) -> Result<i64, crate::StoreError> {
        Ok(self.try_get(i)?)
    }
    fn real(&self, i: usize) -> Result<f64, crate::StoreError> {
        Ok(self.try_get(i)?)
    }
    fn opt_real(&self, i: usize) -> Result<Option<f64>, crate::StoreError> {
        Ok(self.try_get(i)?)
    }
    fn text(&self, i: usize) -> Result<String, crate::StoreError> {
        Ok(self.try_get(i)?)
    }
    fn opt_text(&self, i: usize) -> Result<Option<String>, crate::StoreError> {
        Ok(self.try_get(i)?)
    }
    fn bad(i: usize, why: String) -> crate::StoreError {
        crate::StoreError::Corrupt {
            what: format!("column {i}"),
            reason: why,
        }
    }
}
