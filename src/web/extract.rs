/*!
The API's extractors: JSON bodies and path ids whose rejections take the API's error shape (a 400
or 422 naming the field, a 413 for an oversize body) instead of axum's plain-text answers.
*/

use axum::extract::rejection::{JsonRejection, PathRejection};
use axum::extract::{FromRequest, FromRequestParts, Path, RawPathParams, Request};
use axum::http::request::Parts;

use super::error::AppError;

/// `Json` whose rejection is our error shape: unreadable JSON is 400, wrong types or missing fields
/// 422 naming the field serde names, a body over [`super::JSON_BODY_LIMIT`] 413.
pub struct ApiJson<T>(pub T);

impl<T, S> FromRequest<S> for ApiJson<T>
where
    axum::Json<T>: FromRequest<S, Rejection = JsonRejection>,
    S: Send + Sync,
{
    type Rejection = AppError;
    async fn from_request(req: Request, state: &S) -> Result<Self, Self::Rejection> {
        let (parts, body) = req.into_parts();
        let Some(bytes) = read_limited(body).await? else {
            return Err(AppError::TooLarge(format!(
                "the JSON body is larger than the limit of {} KiB",
                super::JSON_BODY_LIMIT / 1024
            )));
        };
        let req = Request::from_parts(parts, axum::body::Body::from(bytes));
        match axum::Json::<T>::from_request(req, state).await {
            Ok(axum::Json(v)) => Ok(Self(v)),
            Err(JsonRejection::JsonDataError(e)) => {
                let (message, field) = data_error(&e.body_text());
                let field = field_of_rejection(&e).or(field);
                Err(AppError::Unprocessable { message, line: None, column: None, field })
            }
            Err(e) => Err(AppError::BadRequest(e.body_text())),
        }
    }
}

/// What is read of a body past [`super::JSON_BODY_LIMIT`] before the connection is given up.
const DRAIN_LIMIT: u64 = 64 * 1024 * 1024;

/// The body, or `None` when it is over [`super::JSON_BODY_LIMIT`]. An oversize body is read on
/// (and dropped) up to [`DRAIN_LIMIT`], so a client still sending gets the 413 rather than a reset
/// connection; beyond that the connection is closed.
async fn read_limited(mut body: axum::body::Body) -> Result<Option<Vec<u8>>, AppError> {
    use axum::body::HttpBody;
    let mut kept = Vec::new();
    let mut total = 0u64;
    while let Some(frame) = std::future::poll_fn(|cx| std::pin::Pin::new(&mut body).poll_frame(cx)).await {
        let frame = frame.map_err(|e| AppError::BadRequest(format!("the body cannot be read: {e}")))?;
        let Some(data) = frame.data_ref() else { continue };
        total += data.len() as u64;
        if total > DRAIN_LIMIT + super::JSON_BODY_LIMIT as u64 {
            break;
        }
        if total <= super::JSON_BODY_LIMIT as u64 {
            kept.extend_from_slice(data);
        }
    }
    Ok((total <= super::JSON_BODY_LIMIT as u64).then_some(kept))
}

/// serde's message without axum's preamble, and the field it is about. `serde_path_to_error` (which
/// axum's `Json` uses) puts the path first ("site.elevation_m: invalid type: ..."); a missing or
/// unknown field names itself in backticks ("missing field `name`"); a missing one is below that
/// path, an unknown one ends it. A backticked word elsewhere (a value: "invalid type: integer
/// `5`") is not a field.
fn data_error(text: &str) -> (String, Option<String>) {
    let rest = text.split_once("target type: ").map_or(text, |(_, r)| r).to_string();
    let (path, msg) = match rest.split_once(": ") {
        Some((p, m)) if !p.is_empty() && !p.contains(' ') => (Some(p), m),
        _ => (None, rest.as_str()),
    };
    let named =
        if msg.starts_with("missing field `") || (path.is_none() && msg.starts_with("unknown field `")) {
            msg.split('`').nth(1)
        } else {
            None
        };
    let field = match (path, named) {
        (Some(p), Some(n)) => Some(format!("{p}.{n}")),
        (Some(p), None) => Some(p.to_string()),
        (None, Some(n)) => Some(n.to_string()),
        (None, None) => None,
    };
    (rest.clone(), field)
}

/// `Path` whose rejection is our error shape: an id that is not a whole number in range (`1e3`,
/// `0x10`, twenty digits) is 400 naming the route's parameter (`id`, `cid`, ...).
pub struct ApiPath<T>(pub T);

impl<T, S> FromRequestParts<S> for ApiPath<T>
where
    T: serde::de::DeserializeOwned + Send,
    S: Send + Sync,
{
    type Rejection = AppError;
    async fn from_request_parts(parts: &mut Parts, state: &S) -> Result<Self, Self::Rejection> {
        use axum::extract::path::ErrorKind;
        match Path::<T>::from_request_parts(parts, state).await {
            Ok(Path(v)) => Ok(Self(v)),
            Err(PathRejection::FailedToDeserializePathParams(e)) => {
                let names: Vec<String> = RawPathParams::from_request_parts(parts, state)
                    .await
                    .map(|p| p.iter().map(|(k, _)| k.to_string()).collect())
                    .unwrap_or_default();
                let (field, value) = match e.kind() {
                    ErrorKind::ParseErrorAtKey { key, value, .. } => (key.clone(), value.clone()),
                    ErrorKind::ParseErrorAtIndex { index, value, .. } => {
                        (names.get(*index).cloned().unwrap_or_else(|| "id".into()), value.clone())
                    }
                    ErrorKind::ParseError { value, .. } => {
                        (names.first().cloned().unwrap_or_else(|| "id".into()), value.clone())
                    }
                    other => {
                        return Err(AppError::BadRequest(format!("the address cannot be read: {other}")))
                    }
                };
                let shown: String = value.chars().take(40).collect();
                Err(AppError::bad_field(
                    &field,
                    format!("{field} must be a whole number (digits only, within 64 bits), not `{shown}`"),
                ))
            }
            Err(e) => Err(AppError::BadRequest(e.body_text())),
        }
    }
}

/// The field a JSON body's data error is about: from the path axum's `Json` tracked (a type error
/// names the field whose value has the wrong type), else from serde's message.
fn field_of_rejection(e: &axum::extract::rejection::JsonDataError) -> Option<String> {
    use std::error::Error as _;
    let mut src = e.source();
    while let Some(s) = src {
        if let Some(p) = s.downcast_ref::<serde_path_to_error::Error<serde_json::Error>>() {
            return crate::site::field_of_serde(&p.path().to_string(), &p.inner().to_string());
        }
        src = s.source();
    }
    None
}

#[cfg(test)]
mod tests {
    use super::data_error;

    #[derive(serde::Deserialize, Debug)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Inner {
        elevation_m: f64,
    }

    #[derive(serde::Deserialize, Debug)]
    #[serde(deny_unknown_fields)]
    #[allow(dead_code)]
    struct Outer {
        name: String,
        site: Option<Inner>,
    }

    /// The field named for axum's own rejection of a body.
    fn field(body: &str) -> Option<String> {
        match axum::Json::<Outer>::from_bytes(body.as_bytes()) {
            Err(axum::extract::rejection::JsonRejection::JsonDataError(e)) => data_error(&e.body_text()).1,
            other => panic!("not a data error: {:?}", other.map(|j| j.0)),
        }
    }

    #[test]
    fn type_errors_name_the_field_not_the_value() {
        assert_eq!(field(r#"{"name": 5}"#).as_deref(), Some("name"));
        assert_eq!(
            field(r#"{"name": "a", "site": {"elevation_m": "x"}}"#).as_deref(),
            Some("site.elevation_m")
        );
        assert_eq!(field(r#"{"site": null}"#).as_deref(), Some("name"));
        assert_eq!(field(r#"{"name": "a", "site": {}}"#).as_deref(), Some("site.elevation_m"));
        assert_eq!(field(r#"{"name": "a", "bogus": 1}"#).as_deref(), Some("bogus"));
        assert_eq!(field(r#"{"name": "a", "site": {"elevation_m": 1, "x": 2}}"#).as_deref(), Some("site.x"));
    }
}
