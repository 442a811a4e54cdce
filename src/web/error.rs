/*!
One error type for the web layer. Client errors carry what the client needs (`line`, `column`,
`field`); internal errors are logged with their cause chain and shown only as "internal error".
The JSON shape is API.md's: `{"error": {"message", "line", "column", "field"}}`.
*/

use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use axum::Json;
use serde::Serialize;

use crate::app;
use crate::ingest::IngestError;
use crate::site::FieldError;

#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// No such audit, compressor, test or page (404).
    #[error("{0}")]
    NotFound(String),
    /// The request cannot be read at all (400).
    #[error("{0}")]
    BadRequest(String),
    /// The request cannot be read, and one part of it is to blame (400): a path id that is no
    /// number, a multipart part given twice or missing.
    #[error("{message}")]
    BadField { message: String, field: String },
    /// Well-formed but wrong input (422), with the place it is wrong.
    #[error("{message}")]
    Unprocessable { message: String, line: Option<u64>, column: Option<String>, field: Option<String> },
    /// Several fields wrong at once (422): the first as `message` and `field`, all of them in
    /// `errors` (never empty).
    #[error("{}", .0.first().map_or("", |e| e.message.as_str()))]
    Refusals(Vec<FieldError>),
    /// Conflicts with stored data (409).
    #[error("{0}")]
    Conflict(String),
    /// No or a wrong access token (401).
    #[error("this server needs an access token: send Authorization: Bearer TOKEN or sign in at /login")]
    Unauthorized,
    /// Over a size limit (413).
    #[error("{0}")]
    TooLarge(String),
    /// Anything else: logged, never shown in detail (500).
    #[error("internal error")]
    Internal(#[from] anyhow::Error),
}

#[derive(Serialize)]
struct ErrorBody<'a> {
    error: ErrorDetail<'a>,
}

#[derive(Serialize)]
struct ErrorDetail<'a> {
    message: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    line: Option<u64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    column: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    field: Option<&'a str>,
    /// Every field's refusal, when several fields are wrong at once.
    #[serde(skip_serializing_if = "<[_]>::is_empty")]
    errors: &'a [FieldError],
}

impl AppError {
    pub fn status(&self) -> StatusCode {
        match self {
            Self::NotFound(_) => StatusCode::NOT_FOUND,
            Self::BadRequest(_) | Self::BadField { .. } => StatusCode::BAD_REQUEST,
            Self::Unprocessable { .. } | Self::Refusals(_) => StatusCode::UNPROCESSABLE_ENTITY,
            Self::Conflict(_) => StatusCode::CONFLICT,
            Self::TooLarge(_) => StatusCode::PAYLOAD_TOO_LARGE,
            Self::Unauthorized => StatusCode::UNAUTHORIZED,
            Self::Internal(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }

    pub fn field(field: &str, message: impl Into<String>) -> Self {
        Self::Unprocessable { message: message.into(), line: None, column: None, field: Some(field.into()) }
    }

    /// A 400 that names the part of the request to blame.
    pub fn bad_field(field: &str, message: impl Into<String>) -> Self {
        Self::BadField { message: message.into(), field: field.into() }
    }

    pub fn log_if_internal(&self) {
        if let Self::Internal(e) = self {
            tracing::error!(error = format!("{e:#}"), "internal error");
        }
    }

    pub fn place(&self) -> (Option<u64>, Option<&str>, Option<&str>) {
        match self {
            Self::Unprocessable { line, column, field, .. } => (*line, column.as_deref(), field.as_deref()),
            Self::BadField { field, .. } => (None, None, Some(field.as_str())),
            Self::Refusals(all) => (None, None, all.first().map(|e| e.field.as_str())),
            _ => (None, None, None),
        }
    }
}

impl IntoResponse for AppError {
    fn into_response(self) -> Response {
        self.log_if_internal();
        let (line, column, field) = self.place();
        let errors = match &self {
            Self::Refusals(all) => all.as_slice(),
            _ => &[],
        };
        let body =
            ErrorBody { error: ErrorDetail { message: self.to_string(), line, column, field, errors } };
        (self.status(), Json(body)).into_response()
    }
}

impl From<FieldError> for AppError {
    fn from(e: FieldError) -> Self {
        Self::Unprocessable { message: e.message, line: None, column: None, field: Some(e.field) }
    }
}

impl From<IngestError> for AppError {
    fn from(e: IngestError) -> Self {
        Self::Unprocessable { message: e.message, line: e.line, column: e.column, field: e.field }
    }
}

/// The application's errors at the edge: the same statuses and JSON bodies as ever.
impl From<app::Error> for AppError {
    fn from(e: app::Error) -> Self {
        match e {
            app::Error::NotFound(m) => Self::NotFound(m),
            app::Error::Field { field, message } => {
                Self::Unprocessable { message, line: None, column: None, field: Some(field) }
            }
            app::Error::Fields(all) => Self::Refusals(all),
            app::Error::Unprocessable { message, line, column, field } => {
                Self::Unprocessable { message, line, column, field }
            }
            app::Error::Conflict(m) => Self::Conflict(m),
            app::Error::Internal(e) => Self::Internal(e),
        }
    }
}
