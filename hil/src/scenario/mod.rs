//! Scenarios: parsing, validation and the built-in set.
//!
//! A scenario file is TOML in the schema of [`schema`]; [`Scenario::parse`]
//! reads it, checks every value (naming the field at fault) and builds the
//! reference path with the core, so that a path the core would refuse is
//! refused here, with the index of the segment.

pub mod builtin;
pub mod overrides;
pub mod paths;
pub mod presets;
pub mod schema;
pub mod template;
pub mod validate;

use std::sync::Arc;

use kappaline::{Path, Pose};

pub use schema::*;

/// Segments a host-side path may hold.
pub const MAX_SEGMENTS: usize = 256;

/// The reference path in `f64`, as the harness measures against it.
pub type HostPath = Path<f64, MAX_SEGMENTS>;

/// Why a scenario was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScenarioError {
    /// The file is not valid TOML or does not match the schema.
    #[error("{source_name}: field `{field}`: {message}")]
    Schema {
        /// File or built-in name.
        source_name: String,
        /// Dotted path of the field (the table, for a missing key).
        field: String,
        /// What is wrong.
        message: String,
    },
    /// A value is out of its range, or the path does not validate.
    #[error("{source_name}: field `{field}`: {message}")]
    Invalid {
        /// File or built-in name.
        source_name: String,
        /// Dotted path of the field.
        field: String,
        /// What is wrong.
        message: String,
    },
}

impl ScenarioError {
    /// The dotted path of the field at fault.
    pub fn field(&self) -> &str {
        match self {
            ScenarioError::Schema { field, .. } | ScenarioError::Invalid { field, .. } => field,
        }
    }
}

/// A checked scenario, ready to run.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// The file as read.
    pub spec: ScenarioFile,
    /// The reference path.
    pub path: Arc<HostPath>,
    /// Its start pose.
    pub start: Pose<f64>,
    /// The scenario as TOML after every `--set` and `--param`, when it was
    /// read from text (what the report writes as `scenario.toml`).
    pub resolved: Option<Arc<toml::Value>>,
}

impl Scenario {
    /// Parses and checks a scenario from TOML text; `source_name` names it in errors.
    ///
    /// # Errors
    /// [`ScenarioError::Schema`] for bad TOML, a missing or unknown field or a
    /// wrong type; [`ScenarioError::Invalid`] for a value out of range or a
    /// path the core refuses.
    pub fn parse(text: &str, source_name: &str) -> Result<Self, ScenarioError> {
        let value: toml::Value = toml::from_str(text).map_err(|e| ScenarioError::Schema {
            source_name: source_name.to_string(),
            field: "(file)".to_string(),
            message: e.message().to_string() + &line_of(text, e.span()),
        })?;
        Self::from_value(value, source_name)
    }

    /// Checks a scenario given as a TOML value (used by sweeps, which edit
    /// the value before checking it).
    ///
    /// # Errors
    /// As [`Scenario::parse`].
    pub fn from_value(value: toml::Value, source_name: &str) -> Result<Self, ScenarioError> {
        let resolved = Arc::new(value.clone());
        let spec: ScenarioFile = serde_path_to_error::deserialize(value).map_err(|e| {
            let field = e.path().to_string();
            ScenarioError::Schema {
                source_name: source_name.to_string(),
                field: if field == "." {
                    "(top level)".into()
                } else {
                    field
                },
                message: e.into_inner().to_string(),
            }
        })?;
        let mut s = Self::from_spec(spec, source_name)?;
        s.resolved = Some(resolved);
        Ok(s)
    }

    /// Checks an already deserialised scenario.
    ///
    /// # Errors
    /// [`ScenarioError::Invalid`].
    pub fn from_spec(spec: ScenarioFile, source_name: &str) -> Result<Self, ScenarioError> {
        let invalid = |(field, message): (String, String)| ScenarioError::Invalid {
            source_name: source_name.to_string(),
            field,
            message,
        };
        validate::check(&spec).map_err(invalid)?;
        let path = paths::build(&spec.path).map_err(invalid)?;
        validate::check_start_offset(&spec.start, path.length()).map_err(invalid)?;
        let start = path.anchor(0).unwrap_or_default();
        Ok(Self {
            spec,
            path: Arc::new(path),
            start,
            resolved: None,
        })
    }

    /// The scenario's name.
    pub fn name(&self) -> &str {
        &self.spec.name
    }

    /// The resolved scenario as TOML text, with the seed the run used
    /// (empty when the scenario was not read from text).
    pub fn resolved_toml(&self) -> String {
        let Some(v) = &self.resolved else {
            return String::new();
        };
        let mut v = (**v).clone();
        if let (toml::Value::Table(t), Ok(seed)) = (&mut v, i64::try_from(self.spec.seed)) {
            t.insert("seed".into(), toml::Value::Integer(seed));
        }
        toml::to_string(&v).unwrap_or_default()
    }
}

fn line_of(text: &str, span: Option<std::ops::Range<usize>>) -> String {
    match span {
        Some(r) => {
            let line = text.get(..r.start).map_or(0, |t| t.lines().count().max(1));
            format!(" (line {line})")
        }
        None => String::new(),
    }
}

/// Where a scenario comes from: a built-in name or a file path.
///
/// # Errors
/// Unknown built-in, unreadable file.
pub fn source_text(name_or_path: &str) -> anyhow::Result<(String, String)> {
    if let Some(b) = builtin::BUILTINS.iter().find(|b| b.name == name_or_path) {
        return Ok((b.text.to_string(), format!("builtin:{}", b.name)));
    }
    let p = std::path::Path::new(name_or_path);
    if p.exists() {
        let text = std::fs::read_to_string(p)
            .map_err(|e| anyhow::anyhow!("reading {}: {e}", p.display()))?;
        return Ok((text, p.display().to_string()));
    }
    let names: Vec<&str> = builtin::BUILTINS.iter().map(|b| b.name).collect();
    anyhow::bail!(
        "`{name_or_path}` is neither a built-in scenario ({}) nor a file",
        names.join(", ")
    )
}

/// Loads a scenario by built-in name or file path, applying `key=value`
/// overrides first.
///
/// # Errors
/// Unknown source, bad override, or a scenario that does not check.
pub fn load(name_or_path: &str, overrides: &[(String, toml::Value)]) -> anyhow::Result<Scenario> {
    let (text, source) = source_text(name_or_path)?;
    let mut value: toml::Value = toml::from_str(&text).map_err(|e| ScenarioError::Schema {
        source_name: source.clone(),
        field: "(file)".to_string(),
        message: e.message().to_string() + &line_of(&text, e.span()),
    })?;
    for (k, v) in overrides {
        overrides::apply(&mut value, k, v.clone()).map_err(|e| anyhow::anyhow!("--set {e}"))?;
    }
    Ok(Scenario::from_value(value, &source)?)
}
