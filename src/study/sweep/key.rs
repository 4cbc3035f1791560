//! Key paths of a sweep parameter (`materials.eps.conductivity`, `holes[1].circle.radius`,
//! `outline.points[0][0]`): parsing, and reading and setting the number they address in the
//! model's TOML document (toml_edit, so the rest of the file keeps its layout and line numbers).

use crate::error::{Error, Result};
use crate::model::suggest;
use toml_edit::{DocumentMut, Item, Value};

/// One step of a key path: a table key or a zero-based array index.
#[derive(Debug, Clone, PartialEq)]
pub enum Step {
    /// A key of a table (`[materials]`, an inline table).
    Key(String),
    /// An element of an array or array of tables, zero-based in file order.
    Index(usize),
}

/// What a key path addresses in the base model: its kind of number.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Target {
    /// An integer key (written back as an integer for whole values).
    Integer,
    /// A floating-point key.
    Float,
}

/// Parses `materials.eps.conductivity` / `holes[1].circle.radius` / `boundaries."a.b".h`.
pub fn parse_key(key: &str) -> std::result::Result<Vec<Step>, String> {
    let mut steps = Vec::new();
    let mut rest = key;
    loop {
        let (name, after) = if let Some(q) = rest.strip_prefix('"') {
            let end = q.find('"').ok_or("a quoted name has no closing quote")?;
            (&q[..end], &q[end + 1..])
        } else {
            let end = rest
                .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_' || c == '-'))
                .unwrap_or(rest.len());
            (&rest[..end], &rest[end..])
        };
        if name.is_empty() {
            return Err("a part of the path is empty".into());
        }
        steps.push(Step::Key(name.to_string()));
        rest = after;
        while let Some(r) = rest.strip_prefix('[') {
            let end = r.find(']').ok_or("an index has no closing ']'")?;
            let i: usize = r[..end]
                .parse()
                .map_err(|_| format!("index [{}] is not a whole number ≥ 0", &r[..end]))?;
            steps.push(Step::Index(i));
            rest = &r[end + 1..];
        }
        if rest.is_empty() {
            return Ok(steps);
        }
        rest = rest
            .strip_prefix('.')
            .ok_or_else(|| format!("unexpected {:?} (parts are joined by '.')", rest))?;
    }
}

/// The path up to and including step `n` as written (`holes[1]`).
fn prefix(steps: &[Step], n: usize) -> String {
    let mut s = String::new();
    for st in &steps[..=n] {
        match st {
            Step::Key(k) if s.is_empty() => s.push_str(k),
            Step::Key(k) => {
                s.push('.');
                s.push_str(k);
            }
            Step::Index(i) => s.push_str(&format!("[{i}]")),
        }
    }
    s
}

/// The keys of a table or inline table item, for did-you-mean.
fn keys_of(item: &Item) -> Vec<String> {
    match item {
        Item::Table(t) => t.iter().map(|(k, _)| k.to_string()).collect(),
        Item::Value(Value::InlineTable(t)) => t.iter().map(|(k, _)| k.to_string()).collect(),
        _ => Vec::new(),
    }
}

/// Number of elements of an array or array of tables.
fn len_of(item: &Item) -> Option<usize> {
    match item {
        Item::ArrayOfTables(a) => Some(a.len()),
        Item::Value(Value::Array(a)) => Some(a.len()),
        _ => None,
    }
}

fn kind_of(item: &Item) -> &'static str {
    match item {
        Item::None => "nothing",
        Item::Table(_) | Item::Value(Value::InlineTable(_)) => "a table",
        Item::ArrayOfTables(_) | Item::Value(Value::Array(_)) => "an array",
        Item::Value(Value::String(_)) => "a string",
        Item::Value(Value::Boolean(_)) => "a boolean",
        Item::Value(Value::Datetime(_)) => "a date-time",
        Item::Value(Value::Integer(_)) | Item::Value(Value::Float(_)) => "a number",
    }
}

/// One step down from `item`, or why not (naming the path so far).
fn step<'a>(item: &'a Item, steps: &[Step], n: usize) -> std::result::Result<&'a Item, String> {
    let at = prefix(steps, n);
    match &steps[n] {
        Step::Key(k) => {
            let keys = keys_of(item);
            if !matches!(item, Item::Table(_) | Item::Value(Value::InlineTable(_))) {
                let parent = if n == 0 {
                    "the model".into()
                } else {
                    prefix(steps, n - 1)
                };
                return Err(format!("`{parent}` is {}, not a table", kind_of(item)));
            }
            item.get(k.as_str()).ok_or_else(|| {
                let hint = suggest(k, keys.iter().map(String::as_str))
                    .map(|s| format!("; did you mean `{s}`?"))
                    .unwrap_or_default();
                format!("the model has no `{at}`{hint}")
            })
        }
        Step::Index(i) => {
            let parent = prefix(steps, n - 1);
            let len = len_of(item)
                .ok_or_else(|| format!("`{parent}` is {}, not an array", kind_of(item)))?;
            item.get(*i).ok_or_else(|| {
                format!("the model has no `{at}` (`{parent}` has {len} entries, indices from 0)")
            })
        }
    }
}

/// Checks that `steps` address a number in `doc` and says which kind.
pub fn target(doc: &DocumentMut, steps: &[Step]) -> std::result::Result<Target, String> {
    let mut item = doc.as_item();
    for n in 0..steps.len() {
        item = step(item, steps, n)?;
    }
    match item {
        Item::Value(Value::Integer(_)) => Ok(Target::Integer),
        Item::Value(Value::Float(_)) => Ok(Target::Float),
        other => Err(format!(
            "`{}` holds {}, not a number",
            prefix(steps, steps.len() - 1),
            kind_of(other)
        )),
    }
}

/// Sets the number at `steps` (checked by [`target`]) to `x`, keeping its comments and spacing:
/// an integer key gets an integer when `x` is whole, every other case a float.
pub fn set(doc: &mut DocumentMut, steps: &[Step], x: f64, kind: Target) -> Result<()> {
    let mut item = doc.as_item_mut();
    for s in steps {
        let next = match s {
            Step::Key(k) => item.get_mut(k.as_str()),
            Step::Index(i) => item.get_mut(*i),
        };
        item = next.ok_or_else(|| Error::run("sweep: a checked key path vanished (internal)"))?;
    }
    let Item::Value(v) = item else {
        return Err(Error::run(
            "sweep: a checked key path holds no value (internal)",
        ));
    };
    let decor = v.decor().clone();
    *v = if kind == Target::Integer && x.fract() == 0.0 && x.abs() < 9.0e15 {
        Value::from(x as i64)
    } else {
        Value::from(x)
    };
    *v.decor_mut() = decor;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    const MODEL: &str = "title = \"t\"\n[materials.eps]\nconductivity = 0.035 # board\n\
        [[holes]]\ncircle = { center = [0.0, 0.0], radius = 0.1 }\n\
        [[holes]]\ncircle = { center = [1.0, 0.0], radius = 0.2 }\n\
        [[lines]]\nsamples = 11\n";

    fn steps(k: &str) -> Vec<Step> {
        parse_key(k).unwrap()
    }

    #[test]
    fn key_paths_parse_into_steps() {
        assert_eq!(
            steps("holes[1].circle.radius"),
            [
                Step::Key("holes".into()),
                Step::Index(1),
                Step::Key("circle".into()),
                Step::Key("radius".into())
            ]
        );
        assert_eq!(
            steps("boundaries.\"a.b\".h"),
            [
                Step::Key("boundaries".into()),
                Step::Key("a.b".into()),
                Step::Key("h".into())
            ]
        );
        assert_eq!(steps("outline.points[0][1]").len(), 4);
        for bad in ["", "a..b", "a[", "a[x]", "a[-1]", "a b", ".a", "a.", "\"a"] {
            assert!(parse_key(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn targets_are_found_and_refused_with_the_reason() {
        let doc: DocumentMut = MODEL.parse().unwrap();
        let t = |k: &str| target(&doc, &steps(k));
        assert_eq!(t("materials.eps.conductivity"), Ok(Target::Float));
        assert_eq!(t("holes[1].circle.radius"), Ok(Target::Float));
        assert_eq!(t("holes[0].circle.center[1]"), Ok(Target::Float));
        assert_eq!(t("lines[0].samples"), Ok(Target::Integer));
        assert!(t("title").unwrap_err().contains("holds a string"));
        assert!(t("materials.eps").unwrap_err().contains("holds a table"));
        let e = t("holes[2].circle.radius").unwrap_err();
        assert!(e.contains("`holes[2]`") && e.contains("2 entries"), "{e}");
        let e = t("materials.eps.conductivty").unwrap_err();
        assert!(e.contains("did you mean `conductivity`"), "{e}");
        assert!(t("title.x").unwrap_err().contains("not a table"));
        assert!(t("materials[0]").unwrap_err().contains("not an array"));
    }

    #[test]
    fn set_keeps_the_layout_and_the_kind_of_number() {
        let mut doc: DocumentMut = MODEL.parse().unwrap();
        set(
            &mut doc,
            &steps("materials.eps.conductivity"),
            0.04,
            Target::Float,
        )
        .unwrap();
        set(
            &mut doc,
            &steps("holes[1].circle.radius"),
            0.15,
            Target::Float,
        )
        .unwrap();
        set(&mut doc, &steps("lines[0].samples"), 21.0, Target::Integer).unwrap();
        let text = doc.to_string();
        assert!(text.contains("conductivity = 0.04 # board\n"), "{text}");
        assert!(text.contains("radius = 0.15 }"), "{text}");
        assert!(text.contains("samples = 21\n"), "{text}");
        assert_eq!(text.lines().count(), MODEL.lines().count());
        // A float on an integer key stays a float (the model's own check then decides).
        set(&mut doc, &steps("lines[0].samples"), 2.5, Target::Integer).unwrap();
        assert!(doc.to_string().contains("samples = 2.5\n"));
    }
}
