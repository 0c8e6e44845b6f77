//! Users of a shared ledger: PostgreSQL login roles, each a member of one of the three group roles of
//! migrations/postgres/0005_access.sql, with the sites an operator is responsible for. The server
//! enforces what each may see and change; this only adds, lists and removes them.

use postgres::GenericClient;

use super::PgStore;
use crate::StoreError;
use crate::check::FieldError;

/// What a user of a shared ledger may do.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AccessRole {
    /// Enters and edits readings at their sites, and sees only those.
    Operator,
    /// Reads everything, runs audits and reports, imports deliveries.
    Auditor,
    /// Everything: sites, tanks, users.
    Admin,
}

impl AccessRole {
    const ALL: [AccessRole; 3] = [AccessRole::Operator, AccessRole::Auditor, AccessRole::Admin];

    /// Its name in commands and lists.
    pub fn as_str(self) -> &'static str {
        match self {
            AccessRole::Operator => "operator",
            AccessRole::Auditor => "auditor",
            AccessRole::Admin => "admin",
        }
    }

    /// Its group role on the server.
    pub fn group(self) -> &'static str {
        match self {
            AccessRole::Operator => "cryoledger_operator",
            AccessRole::Auditor => "cryoledger_auditor",
            AccessRole::Admin => "cryoledger_admin",
        }
    }

    fn of_group(g: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|r| r.group() == g)
    }
}

impl std::str::FromStr for AccessRole {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        Self::ALL
            .into_iter()
            .find(|r| r.as_str().eq_ignore_ascii_case(s.trim()))
            .ok_or_else(|| format!("unknown role '{s}': expected operator, auditor or admin"))
    }
}

/// A user of the ledger, with the sites they are given.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LedgerUser {
    /// The login name.
    pub name: String,
    /// What they may do.
    pub role: AccessRole,
    /// The sites they are responsible for, by name (an operator sees only these).
    pub sites: Vec<String>,
    /// False when the login is disabled on the server.
    pub can_log_in: bool,
}

fn invalid(field: &str, reason: impl Into<String>) -> StoreError {
    StoreError::Invalid(vec![FieldError::new(field, reason)])
}

/// A login name: letters, digits, `_`, `-` and `.`, not one of the server's or cryoledger's own.
fn check_name(name: &str) -> Result<(), StoreError> {
    let ok = !name.is_empty()
        && name.len() <= 63
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '-' | '.'));
    if !ok {
        return Err(invalid(
            "user",
            format!("'{name}' is not a user name: use 1-63 letters, digits, '_', '-' or '.'"),
        ));
    }
    let lower = name.to_ascii_lowercase();
    if lower.starts_with("pg_") || lower.starts_with("cryoledger_") || lower == "public" {
        return Err(invalid(
            "user",
            format!("'{name}' is reserved on the server: choose another name"),
        ));
    }
    Ok(())
}

/// The cryoledger role of a login role, if it has one.
fn role_of(c: &mut impl GenericClient, name: &str) -> Result<Option<AccessRole>, StoreError> {
    let rows = c.query(
        "SELECT g.rolname::TEXT FROM pg_roles r JOIN pg_auth_members m ON m.member = r.oid \
         JOIN pg_roles g ON g.oid = m.roleid WHERE r.rolname = $1",
        &[&name],
    )?;
    for r in rows {
        let g: String = r.try_get(0)?;
        if let Some(role) = AccessRole::of_group(&g) {
            return Ok(Some(role));
        }
    }
    Ok(None)
}

impl PgStore {
    /// Add a user with a role and their sites (an operator needs at least one), or give an existing
    /// user of the same role more sites. A password is set when given (the server's authentication
    /// decides whether one is asked). Run by an admin or the ledger's owner.
    pub fn add_user(
        &mut self,
        name: &str,
        role: AccessRole,
        sites: &[String],
        password: Option<&str>,
    ) -> Result<(), StoreError> {
        check_name(name)?;
        if role == AccessRole::Operator && sites.is_empty() {
            return Err(invalid(
                "site",
                "an operator sees only their sites: give at least one",
            ));
        }
        let mut c = self.client();
        let mut tx = c.transaction()?;
        let known: Vec<String> = tx
            .query(
                "SELECT name FROM sites WHERE deleted_at IS NULL AND name = ANY($1)",
                &[&sites],
            )?
            .iter()
            .map(|r| r.try_get(0))
            .collect::<Result<_, _>>()?;
        if let Some(unknown) = sites.iter().find(|s| !known.contains(s)) {
            return Err(invalid("site", format!("there is no site '{unknown}'")));
        }
        let exists: bool = tx
            .query_one(
                "SELECT EXISTS(SELECT 1 FROM pg_roles WHERE rolname = $1)",
                &[&name],
            )?
            .try_get(0)?;
        if exists {
            match role_of(&mut tx, name)? {
                Some(r) if r == role => {}
                Some(r) => {
                    return Err(invalid(
                        "role",
                        format!(
                            "'{name}' is already a user as {}: remove them first to change the role",
                            r.as_str()
                        ),
                    ));
                }
                None => {
                    return Err(invalid(
                        "user",
                        format!(
                            "'{name}' is a login of the server that is no cryoledger user: choose another name"
                        ),
                    ));
                }
            }
        } else {
            // the server quotes the name and the password (%I, %L), so neither can carry SQL
            let extra = if role == AccessRole::Admin {
                " CREATEROLE"
            } else {
                ""
            };
            let sql: String = tx
                .query_one(
                    &format!("SELECT format('CREATE ROLE %I LOGIN{extra} PASSWORD %L IN ROLE %I', $1::TEXT, $2::TEXT, $3::TEXT)"),
                    &[&name, &password, &role.group()],
                )?
                .try_get(0)?;
            tx.batch_execute(&sql)?;
        }
        tx.execute(
            "INSERT INTO site_access (user_name, site_id) SELECT $1, id FROM sites \
             WHERE deleted_at IS NULL AND name = ANY($2) ON CONFLICT DO NOTHING",
            &[&name, &sites],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// Every cryoledger user of the server, with their sites in this ledger, by name.
    pub fn users(&self) -> Result<Vec<LedgerUser>, StoreError> {
        let mut c = self.client();
        let rows = c.query(
            "SELECT r.rolname::TEXT, g.rolname::TEXT, r.rolcanlogin FROM pg_roles r \
             JOIN pg_auth_members m ON m.member = r.oid JOIN pg_roles g ON g.oid = m.roleid \
             WHERE g.rolname IN ('cryoledger_operator', 'cryoledger_auditor', 'cryoledger_admin') \
             ORDER BY r.rolname COLLATE \"C\", g.rolname",
            &[],
        )?;
        let sites = c.query(
            "SELECT a.user_name, s.name FROM site_access a JOIN sites s ON s.id = a.site_id \
             ORDER BY a.user_name, s.name COLLATE \"C\"",
            &[],
        )?;
        let mut out: Vec<LedgerUser> = Vec::new();
        for r in rows {
            let name: String = r.try_get(0)?;
            let group: String = r.try_get(1)?;
            if out.last().is_some_and(|u| u.name == name) {
                continue;
            }
            let Some(role) = AccessRole::of_group(&group) else {
                continue;
            };
            let mut given = Vec::new();
            for s in &sites {
                if s.try_get::<_, String>(0)? == name {
                    given.push(s.try_get(1)?);
                }
            }
            out.push(LedgerUser {
                name,
                role,
                sites: given,
                can_log_in: r.try_get(2)?,
            });
        }
        Ok(out)
    }

    /// Remove a user: their sites in this ledger, then their login (refused for a login that is no
    /// cryoledger user). The history keeps what they entered.
    pub fn remove_user(&mut self, name: &str) -> Result<(), StoreError> {
        check_name(name)?;
        let mut c = self.client();
        let mut tx = c.transaction()?;
        if role_of(&mut tx, name)?.is_none() {
            return Err(StoreError::NotFound {
                what: "user",
                key: name.to_owned(),
            });
        }
        tx.execute("DELETE FROM site_access WHERE user_name = $1", &[&name])?;
        let sql: String = tx
            .query_one("SELECT format('DROP ROLE %I', $1::TEXT)", &[&name])?
            .try_get(0)?;
        tx.batch_execute(&sql)?;
        tx.commit()?;
        Ok(())
    }
}
