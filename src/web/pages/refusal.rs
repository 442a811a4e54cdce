//! A form the server refused, shown again: every field's refusal at once and what was typed (in the
//! units it was typed in), so that nothing typed is lost. The page lists the refusals in its alert
//! (`macros.html`, `refused`), and `static/js/common.js` puts the typed values back into the form
//! (found by its `action`), opens the section that holds it and sets each refusal beside its field.

use std::collections::HashMap;

use serde::Serialize;

use crate::site::FieldError;
use crate::web::error::AppError;

/// One field's refusal, in words.
#[derive(Debug, Clone, Serialize)]
pub struct FieldRefusal {
    /// The form field's `name` (`heating_degree_days_k_day[3]` sets the message beside
    /// `heating_degree_days_k_day`).
    pub field: String,
    pub message: String,
}

/// A refused form: its `action`, the fields as posted and every refusal.
#[derive(Debug, Clone, Serialize)]
pub struct Refusal {
    pub action: String,
    pub values: HashMap<String, String>,
    pub errors: Vec<FieldRefusal>,
}

impl Refusal {
    pub fn new(action: impl Into<String>, form: &HashMap<String, String>, errors: Vec<FieldError>) -> Self {
        let mut values = form.clone();
        values.remove("entry_units");
        Self {
            action: action.into(),
            values,
            errors: errors.into_iter().map(|e| FieldRefusal { field: e.field, message: e.message }).collect(),
        }
    }

    /// The refusal of an application error that names a field or says why in words (422, 409);
    /// `None` for any other error, which is an error page.
    pub fn of_error(action: impl Into<String>, form: &HashMap<String, String>, e: &AppError) -> Option<Self> {
        match e {
            AppError::Unprocessable { message, field, .. } => Some(Self::new(
                action,
                form,
                vec![FieldError::new(field.as_deref().unwrap_or(""), message.clone())],
            )),
            AppError::Refusals(all) => Some(Self::new(action, form, all.clone())),
            AppError::Conflict(message) => {
                Some(Self::new(action, form, vec![FieldError::new("", message.clone())]))
            }
            _ => None,
        }
    }

    /// The JSON the page's script reads (askama's `json` filter escapes it for HTML).
    pub fn data(&self) -> serde_json::Value {
        serde_json::to_value(self).unwrap_or_default()
    }
}
