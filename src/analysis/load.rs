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
    /// project that is returned is whole, and no input makes this panic.
    ///
    /// ```
    /// use ddlens::analysis::{Project, SCHEMA};
    /// let text = std::fs::read_to_string("fixtures/projects/wave1-demo.json").unwrap();
    /// let (project, notices) = Project::from_json(&text).unwrap();
    /// assert_eq!(project.ddlens_project, SCHEMA);
    /// assert!(notices[0].contains("schema 1"));
    /// // Written and read again, nothing changes.
    /// let (again, _) = Project::from_json(&project.to_json()).unwrap();
    /// assert_eq!(again, project);
    /// ```
    pub fn from_json(text: &str) -> Result<(Project, Vec<String>), DocumentError> {
        let mut value: Value =
            serde_json::from_str(text).map_err(|e| DocumentError::NotJson(e.to_string()))?;
        let mut notices = Vec::new();
        if schema_of(&value)? == 1 {
            value = super::migrate::from_schema_1(&value, &mut notices)?;
        }
        let project = typed(value, &mut notices)?;
        check(&project)?;
        Ok((project, notices))
    }

    /// The project as JSON (schema [`SCHEMA`]).
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_default()
    }
}

/// The keys of a project and of a document (anything else is reported and ignored).
const PROJECT_KEYS: [&str; 6] = [
    ENVELOPE_KEY,
    "program",
    "saved",
    "samples",
    "active",
    "page",
];
const DOCUMENT_KEYS: [&str; 7] = [
    "sample",
    "steps",
    "bands",
    "ligand_field",
    "results",
    "program",
    "notices",
];

/// Notices for the keys of `object` (at `path`) not in `known`.
fn unknown_keys(object: &Value, known: &[&str], path: &str, notices: &mut Vec<String>) {
    if let Some(map) = object.as_object() {
        for k in map.keys().filter(|k| !known.contains(&k.as_str())) {
            notices.push(format!(
                "{path}{k}: this entry is not part of schema {SCHEMA} and was ignored"
            ));
        }
    }
}

/// Deserialises one part of a value, naming its path in the error.
fn part<T: serde::de::DeserializeOwned>(value: Value, path: &str) -> Result<T, DocumentError> {
    serde_json::from_value(value).map_err(|e| {
        let m = e.to_string();
        let m = m.split(" at line ").next().unwrap_or(&m).to_string();
        DocumentError::field(path, format!("cannot be read: {m}"))
    })
}

/// The typed project, each sample and each of its parts read separately so an
/// error names where it is.
fn typed(mut value: Value, notices: &mut Vec<String>) -> Result<Project, DocumentError> {
    unknown_keys(&value, &PROJECT_KEYS, "", notices);
    let samples = match value.get_mut("samples").map(Value::take) {
        Some(Value::Array(a)) => a,
        Some(_) => return Err(DocumentError::field("samples", "should be a list")),
        None => return Err(DocumentError::field("samples", "is missing")),
    };
    let mut docs = Vec::with_capacity(samples.len());
    for (i, mut d) in samples.into_iter().enumerate() {
        let at = format!("samples[{i}]");
        if !d.is_object() {
            return Err(DocumentError::field(at, "should be an object"));
        }
        unknown_keys(&d, &DOCUMENT_KEYS, &format!("{at}."), notices);
        check_data_numbers(&d, &at)?;
        for key in ["sample", "bands"] {
            if d.get(key).is_none() {
                return Err(DocumentError::field(format!("{at}.{key}"), "is missing"));
            }
        }
        let mut take = |k: &str| d.get_mut(k).map_or(Value::Null, Value::take);
        let (sample, steps, bands, lf, results, program, doc_notices) = (
            take("sample"),
            take("steps"),
            take("bands"),
            take("ligand_field"),
            take("results"),
            take("program"),
            take("notices"),
        );
        let or_empty = |v: Value| {
            if v.is_null() {
                Value::Array(Vec::new())
            } else {
                v
            }
        };
        docs.push(super::Document {
            sample: part(sample, &format!("{at}.sample"))?,
            steps: part(or_empty(steps), &format!("{at}.steps"))?,
            bands: part(bands, &format!("{at}.bands"))?,
            ligand_field: part(lf, &format!("{at}.ligand_field"))?,
            results: part(results, &format!("{at}.results"))?,
            program: if program.is_null() {
                String::new()
            } else {
                part(program, &format!("{at}.program"))?
            },
            notices: part(or_empty(doc_notices), &format!("{at}.notices"))?,
        });
    }
    if let Some(page) = value.get("page") {
        unknown_keys(page, &["view", "series_sort"], "page.", notices);
    }
    value["samples"] = Value::Array(Vec::new());
    let mut project: Project = part(value, "the project")?;
    project.samples = docs;
    Ok(project)
}

/// Every entry of the data arrays must be a number (a NaN written by a
/// browser arrives as null).
fn check_data_numbers(doc: &Value, at: &str) -> Result<(), DocumentError> {
    let Some(data) = doc.get("sample").and_then(|s| s.get("data")) else {
        return Ok(());
    };
    for key in ["wavenumber", "values"] {
        finite_list(data.get(key), &format!("{at}.sample.data.{key}"))?;
    }
    Ok(())
}

/// A list of finite numbers at `path`, or the error naming the first entry that is not.
pub(crate) fn finite_list(list: Option<&Value>, path: &str) -> Result<(), DocumentError> {
    let Some(list) = list else {
        return Err(DocumentError::field(path, "is missing"));
    };
    let Some(items) = list.as_array() else {
        return Err(DocumentError::field(path, "should be a list of numbers"));
    };
    match items
        .iter()
        .position(|v| !v.as_f64().is_some_and(f64::is_finite))
    {
        Some(j) => Err(DocumentError::field(
            format!("{path}[{j}]"),
            "is not a finite number",
        )),
        None => Ok(()),
    }
}

/// The checks serde cannot make: finite numbers, equal lengths, ascending
/// axes, band models inside their spectra, forced states of the ion.
fn check(p: &Project) -> Result<(), DocumentError> {
    if let Some(a) = p.active {
        if a >= p.samples.len() {
            return Err(DocumentError::field(
                "active",
                format!(
                    "names sample {a}, but the project holds {}",
                    p.samples.len()
                ),
            ));
        }
    }
    for (name, r) in [
        ("page.view.x", p.page.view.x),
        ("page.view.y", p.page.view.y),
    ] {
        if let Some(r) = r {
            range(&r, name)?;
        }
    }
    for (i, d) in p.samples.iter().enumerate() {
        super::validate::document(d, &format!("samples[{i}]"))?;
    }
    Ok(())
}

/// A `[low, high]` pair of finite numbers, low below high.
pub(crate) fn range(r: &[f64; 2], path: &str) -> Result<(), DocumentError> {
    if !r.iter().all(|v| v.is_finite()) {
        return Err(DocumentError::field(path, "should hold two finite numbers"));
    }
    if r[0] >= r[1] {
        return Err(DocumentError::field(
            path,
            format!("should run from low to high, found {} to {}", r[0], r[1]),
        ));
    }
    Ok(())
}
