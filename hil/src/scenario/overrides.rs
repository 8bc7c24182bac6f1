//! Dotted-path edits of a scenario before it is checked:
//! `gnss.noise_m=0.05`, `controller.law.heading_gain_per_m=0.8`,
//! `faults[0].at_s=12`. The value is a TOML literal (`0.05`, `true`,
//! `"stanley"`); a bare word that is not one is taken as a string.

use toml::Value;

use super::presets::MachineKind;

/// Applies one `--set`: like [`set`], except that choosing a steering law
/// (`controller.law.kind=stanley`, or `controller.law=stanley`) replaces
/// the whole law table with that law's gains for the machine kind of the
/// scenario's vehicle (see [`MachineKind::of_vehicle`]), because the gains
/// of one law mean nothing to another. Later `--set`s can then change
/// single gains.
///
/// # Errors
/// As [`set`], and an unknown law name.
pub fn apply(root: &mut Value, path: &str, value: Value) -> Result<(), String> {
    let key = path.trim();
    let switching = key == "controller.law.kind" || key == "controller.law";
    let Some(law) = value.as_str().filter(|_| switching) else {
        return set(root, path, value);
    };
    let current = root
        .get("controller")
        .and_then(|c| c.get("law"))
        .and_then(|l| l.get("kind"))
        .and_then(Value::as_str);
    if current == Some(law) {
        return Ok(());
    }
    let kind = MachineKind::of_vehicle(root.get("vehicle"));
    let table = kind.law_table(law).map_err(|e| format!("`{path}`: {e}"))?;
    set(root, "controller.law", Value::Table(table))
}

/// Sets `path` (dotted keys, `[i]` for array items) in `root` to `value`.
///
/// # Errors
/// A message naming the path when a step is not a table or array, or an
/// index is out of range. Missing keys and tables are added (the schema
/// check then refuses them if the schema has no such field).
pub fn set(root: &mut Value, path: &str, value: Value) -> Result<(), String> {
    let steps = parse_path(path)?;
    let mut here = root;
    let n = steps.len();
    for (i, step) in steps.into_iter().enumerate() {
        let last = i + 1 == n;
        here = match step {
            Step::Key(k) => {
                let Value::Table(t) = here else {
                    return Err(format!("`{path}`: `{k}` is not inside a table"));
                };
                if last {
                    t.insert(k, value);
                    return Ok(());
                }
                // A missing table on the way is created (an optional table
                // such as `controller.supervisor`); the schema check then
                // refuses it if the schema has no such table.
                t.entry(k)
                    .or_insert_with(|| Value::Table(toml::Table::new()))
            }
            Step::Index(ix) => {
                let Value::Array(a) = here else {
                    return Err(format!("`{path}`: [{ix}] is not an array item"));
                };
                let len = a.len();
                let Some(slot) = a.get_mut(ix) else {
                    return Err(format!("`{path}`: index {ix} out of range (length {len})"));
                };
                if last {
                    *slot = value;
                    return Ok(());
                }
                slot
            }
        };
    }
    Err(format!("`{path}`: empty path"))
}

/// Parses `key=value` into the path and a TOML value.
///
/// # Errors
/// A message when there is no `=`.
pub fn parse_assignment(s: &str) -> Result<(String, Value), String> {
    let (k, v) = s
        .split_once('=')
        .ok_or_else(|| format!("`{s}`: expected key=value"))?;
    Ok((k.trim().to_string(), literal(v.trim())))
}

/// A TOML literal, or the text as a string.
pub fn literal(v: &str) -> Value {
    toml::from_str::<toml::Table>(&format!("x = {v}"))
        .ok()
        .and_then(|mut t| t.remove("x"))
        .unwrap_or_else(|| Value::String(v.to_string()))
}

enum Step {
    Key(String),
    Index(usize),
}

fn parse_path(path: &str) -> Result<Vec<Step>, String> {
    let mut out = Vec::new();
    for part in path.split('.') {
        let (key, mut rest) = match part.find('[') {
            Some(i) => (&part[..i], &part[i..]),
            None => (part, ""),
        };
        if key.is_empty() && out.is_empty() {
            return Err(format!("`{path}`: empty key"));
        }
        if !key.is_empty() {
            out.push(Step::Key(key.to_string()));
        }
        while let Some(r) = rest.strip_prefix('[') {
            let end = r
                .find(']')
                .ok_or_else(|| format!("`{path}`: missing `]`"))?;
            let ix = r[..end]
                .parse::<usize>()
                .map_err(|_| format!("`{path}`: bad index `{}`", &r[..end]))?;
            out.push(Step::Index(ix));
            rest = &r[end + 1..];
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sets_nested_values() {
        let mut v: Value = toml::from_str("a = { b = 1 }\nc = [{ d = 2 }]").unwrap();
        set(&mut v, "a.b", literal("3.5")).unwrap();
        set(&mut v, "c[0].d", literal("\"x\"")).unwrap();
        assert_eq!(v["a"]["b"].as_float(), Some(3.5));
        assert_eq!(v["c"][0]["d"].as_str(), Some("x"));
        set(&mut v, "z.y", literal("1")).unwrap();
        assert_eq!(v["z"]["y"].as_integer(), Some(1));
        assert!(set(&mut v, "a.b.c", literal("1")).is_err());
        assert!(set(&mut v, "c[3].d", literal("1")).is_err());
    }
}
