/*!
The application's error: what went wrong in terms of audits and their records, with no HTTP in it.
The web layer turns it into a status and the API's JSON error shape (`web::error`); the command line
prints it.
*/

use crate::ingest::IngestError;
use crate::site::FieldError;
use crate::store::import::ImportError;
use crate::store::StoreError;

#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// No such audit, compressor, test or scenario.
    #[error("{0}")]
    NotFound(String),
    /// One input field is wrong.
    #[error("{message}")]
    Field { field: String, message: String },
    /// Several input fields are wrong: every refusal at once, each naming its field (never empty;
    /// the first is the one a single refusal would give).
    #[error("{}", .0.first().map_or("", |e| e.message.as_str()))]
    Fields(Vec<FieldError>),
    /// Well-formed but wrong input, with the place it is wrong (a file's line and column).
    #[error("{message}")]
    Unprocessable { message: String, line: Option<u64>, column: Option<String>, field: Option<String> },
    /// Conflicts with stored data.
    #[error("{0}")]
    Conflict(String),
    /// Anything else (the database, a task that panicked): a fault, not the user's doing.
    #[error("internal error: {0:#}")]
    Internal(anyhow::Error),
}

/// The application's result.
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    pub fn field(field: &str, message: impl Into<String>) -> Self {
        Self::Field { field: field.to_string(), message: message.into() }
    }

    /// Every refusal at once: [`Error::Fields`], or the one [`Error::Field`] when there is one.
    pub fn fields(mut all: Vec<FieldError>) -> Self {
        if all.len() == 1 {
            let e = all.swap_remove(0);
            return Self::Field { field: e.field, message: e.message };
        }
        Self::Fields(all)
    }

    pub fn internal(e: impl Into<anyhow::Error>) -> Self {
        Self::Internal(e.into())
    }

    pub(crate) fn no_audit(id: i64) -> Self {
        Self::NotFound(format!("there is no audit {id}"))
    }
}

impl From<StoreError> for Error {
    fn from(e: StoreError) -> Self {
        Self::Internal(anyhow::Error::new(e))
    }
}

impl From<sqlx::Error> for Error {
    fn from(e: sqlx::Error) -> Self {
        Self::Internal(anyhow::Error::new(e))
    }
}

impl From<tokio::task::JoinError> for Error {
    fn from(e: tokio::task::JoinError) -> Self {
        Self::Internal(anyhow::Error::new(e))
    }
}

impl From<FieldError> for Error {
    fn from(e: FieldError) -> Self {
        Self::Field { field: e.field, message: e.message }
    }
}

impl From<IngestError> for Error {
    fn from(e: IngestError) -> Self {
        Self::Unprocessable { message: e.message, line: e.line, column: e.column, field: e.field }
    }
}

impl From<ImportError> for Error {
    fn from(e: ImportError) -> Self {
        match e {
            ImportError::Bad(i) => i.into(),
            ImportError::Store(s) => s.into(),
            other @ (ImportError::Overlap { .. }
            | ImportError::InProgress(_)
            | ImportError::ReplacedGone(_)) => Self::Conflict(other.to_string()),
        }
    }
}
