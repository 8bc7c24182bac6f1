//! Scenarios shipped inside the binary, set in invented places.

use super::{Scenario, ScenarioError};

/// A built-in scenario: name, one line, TOML text.
pub struct Builtin {
    /// Name used on the command line.
    pub name: &'static str,
    /// TOML text.
    pub text: &'static str,
}

/// Every built-in scenario; the first is the default of `run`.
pub const BUILTINS: [Builtin; 3] = [
    Builtin {
        name: "field",
        text: include_str!("../../scenarios/field.toml"),
    },
    Builtin {
        name: "warehouse",
        text: include_str!("../../scenarios/warehouse.toml"),
    },
    Builtin {
        name: "highspeed",
        text: include_str!("../../scenarios/highspeed.toml"),
    },
];

/// The built-in scenario called `name`, checked.
///
/// # Errors
/// `None` if there is no such built-in; a [`ScenarioError`] if it does not
/// check (a defect the tests catch).
pub fn builtin(name: &str) -> Option<Result<Scenario, ScenarioError>> {
    BUILTINS
        .iter()
        .find(|b| b.name == name)
        .map(|b| Scenario::parse(b.text, &format!("builtin:{}", b.name)))
}
