//! The JSON Schemas in `schemas/` (draft 2020-12) against the files the project ships and the
//! loaders, checked with a general-purpose validator (the `jsonschema` crate, which runs the
//! official JSON-Schema-Test-Suite for draft 2020-12): every demo file, fixture and README example
//! validates, and what a schema rejects the loader rejects too.

use std::path::{Path, PathBuf};

use plumbline_core::check::{PartHead, ResultsHead, ResultsWriter, Runner, Shard, parse_results};
use plumbline_core::input::PathPolicy;
use plumbline_core::level::load_level;
use plumbline_core::probe::parse_probe_set;
use plumbline_core::session::{HandOut, OpenOptions, open};
use proptest::prelude::*;
use serde_json::Value;

const ROOT: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/..");

fn repo(path: &str) -> PathBuf {
    Path::new(ROOT).join(path)
}

/// The validator of `schemas/<kind>.schema.json`.
fn validator(kind: &str) -> jsonschema::Validator {
    let text = std::fs::read_to_string(repo(&format!("schemas/{kind}.schema.json"))).unwrap();
    let schema: Value = serde_json::from_str(&text).unwrap();
    jsonschema::draft202012::meta::validate(&schema)
        .unwrap_or_else(|e| panic!("{kind}: not a valid draft 2020-12 schema: {e}"));
    jsonschema::draft202012::new(&schema).unwrap()
}

/// Every error the schema finds in `value`, one per line.
fn errors(validator: &jsonschema::Validator, value: &Value) -> String {
    validator
        .iter_errors(value)
        .map(|e| format!("{}: {e}", e.instance_path()))
        .collect::<Vec<_>>()
        .join("\n")
}

fn read_json(path: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// The schema kind a file is, by its `"plumbline"` field.
fn kind_of(value: &Value) -> Option<&str> {
    value.get("plumbline").and_then(Value::as_str)
}

#[test]
fn every_shipped_level_probe_set_and_results_file_validates() {
    let files = [
        "scenes/saltfen-quay.level.json",
        "scenes/saltfen-quay-edited.level.json",
        "scenes/saltfen-quay.probes.json",
        "scenes/saltfen-quay.baseline.results.json",
        "core/tests/fixtures/check/lane.level.json",
        "core/tests/fixtures/check/lane.probes.json",
        "core/tests/fixtures/check/lane.results.json",
    ];
    for file in files {
        let value = read_json(&repo(file));
        let kind = kind_of(&value).unwrap();
        let found = errors(&validator(kind), &value);
        assert!(found.is_empty(), "{file}:\n{found}");
    }
    // The demo's baseline holds a result of every kind, volumes and clearances among them.
    let baseline = read_json(&repo("scenes/saltfen-quay.baseline.results.json"));
    let kinds: std::collections::BTreeSet<&str> = baseline["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["kind"].as_str().unwrap())
        .collect();
    assert_eq!(kinds.len(), plumbline_core::probe::ProbeKind::ALL.len());
    for field in ["volumes", "clearance"] {
        assert!(
            baseline["results"]
                .as_array()
                .unwrap()
                .iter()
                .any(|r| r.get(field).is_some()),
            "{field}"
        );
    }
}

#[test]
fn a_shards_partial_results_validate() {
    let opened = open(
        &repo("scenes/saltfen-quay.probes.json"),
        &OpenOptions::default(),
    )
    .unwrap();
    let shard = Shard { index: 2, count: 3 };
    let positions = opened.shard_positions(shard).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("part.json");
    let head = ResultsHead {
        probes: "saltfen-quay.probes.json".into(),
        level: "saltfen-quay.level.json".into(),
        level_digest: opened.level.digest.clone(),
        probes_digest: opened.probes_digest.clone().unwrap(),
    };
    let part = PartHead {
        shard,
        of_probes: opened.probes.len(),
        positions,
    };
    let mut writer =
        ResultsWriter::create(&path, part.positions.len(), &head, Some(&part)).unwrap();
    let summary = opened
        .answer_each(
            &Runner::new(Some(1)).unwrap(),
            Some(&part.positions),
            None,
            HandOut {
                each: &mut |_, _, _| Ok(()),
                laid_out: Some(&mut |text, count| {
                    writer.push_laid_out(text, count).unwrap();
                    Ok(())
                }),
            },
        )
        .unwrap();
    writer.finish(&summary).unwrap();
    let value = read_json(&path);
    assert_eq!(summary.probes, part.positions.len());
    let found = errors(&validator("partial-results"), &value);
    assert!(found.is_empty(), "{found}");
    assert!(!validator("results").is_valid(&value));
}

/// The fenced ```json blocks of a Markdown file.
fn json_blocks(markdown: &str) -> Vec<String> {
    let mut blocks = Vec::new();
    let mut current: Option<String> = None;
    for line in markdown.lines() {
        match &mut current {
            None if line.trim_start() == "```json" => current = Some(String::new()),
            Some(block) if line.trim_start() == "```" => {
                blocks.push(std::mem::take(block));
                current = None;
            }
            Some(block) => {
                block.push_str(line);
                block.push('\n');
            }
            None => {}
        }
    }
    blocks
}

/// A documentation example as a whole file: a whole file as it is; a probe inside a probe set; a
/// `"rules"`, `"tag_rules"` or `"lint"` part inside the file it belongs to.
fn as_file(block: &str) -> Option<Value> {
    let value: Value = serde_json::from_str(block)
        .or_else(|_| serde_json::from_str(&format!("{{{block}}}")))
        .ok()?;
    if kind_of(&value).is_some() {
        return Some(value);
    }
    let mut probes = serde_json::json!({
        "plumbline": "probes", "version": 1, "level": "example.level.json", "probes": []
    });
    let mut level = serde_json::json!({"plumbline": "level", "version": 1, "objects": []});
    if value.get("kind").is_some() {
        probes["probes"] = Value::Array(vec![value]);
        return Some(probes);
    }
    let (key, inner) = value.as_object()?.iter().next()?;
    let file = if key == "rules" {
        &mut probes
    } else {
        &mut level
    };
    file[key.as_str()] = inner.clone();
    Some(file.clone())
}

#[test]
fn every_example_in_the_readme_and_format_notes_validates() {
    let mut checked = 0;
    for doc in ["README.md", "docs/formats.md"] {
        let text = std::fs::read_to_string(repo(doc)).unwrap();
        for block in json_blocks(&text) {
            let file = as_file(&block)
                .unwrap_or_else(|| panic!("{doc}: an example that is not JSON:\n{block}"));
            let kind = kind_of(&file).unwrap();
            let found = errors(&validator(kind), &file);
            assert!(found.is_empty(), "{doc}, example:\n{block}\n{found}");
            if kind == "probes" {
                let text = serde_json::to_string(&file).unwrap();
                parse_probe_set(Path::new(doc), &text)
                    .unwrap_or_else(|e| panic!("{doc}: the loader refuses an example: {e}"));
            }
            checked += 1;
        }
    }
    assert!(checked >= 5, "only {checked} examples found");
}

#[test]
fn files_may_name_their_schema() {
    let mut probes = read_json(&repo("core/tests/fixtures/check/lane.probes.json"));
    probes["$schema"] = Value::from("../../schemas/probes.schema.json");
    let text = serde_json::to_string(&probes).unwrap();
    let set = parse_probe_set(Path::new("lane.probes.json"), &text).unwrap();
    assert_eq!(
        set.schema.as_deref(),
        Some("../../schemas/probes.schema.json")
    );
    // Saving keeps it, first.
    let saved = plumbline_core::probe::probe_set_to_json(&set);
    assert!(saved.starts_with("{\n  \"$schema\": \"../../schemas/probes.schema.json\",\n"));
    assert!(errors(&validator("probes"), &probes).is_empty());
}

/// A small deterministic generator (xorshift64*; Vigna, "An experimental exploration of Marsaglia's
/// xorshift generators, scrambled", ACM TOMS 42(4), 2016).
struct Mutator(u64);

impl Mutator {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    /// A value of some other shape than most fields hold (never `null`, which optional fields take
    /// as absent).
    fn odd_value(&mut self) -> Value {
        let values = [
            Value::from(-1.0),
            Value::from(0),
            Value::from(1e300),
            Value::from(2.5),
            Value::from("all"),
            Value::from("point"),
            Value::from("sphere"),
            Value::from(""),
            Value::from(true),
            serde_json::json!([]),
            serde_json::json!([1, 2]),
            serde_json::json!([0, 0, 0]),
            serde_json::json!([0, 0, 0, 1]),
            serde_json::json!({}),
            serde_json::json!({"type": "sphere", "radius": 0.5}),
            serde_json::json!({"min": [0, 0, 0], "max": [1, 1, 1]}),
        ];
        values[self.below(values.len())].clone()
    }
}

/// Every place in `value`: the path of keys and indices to each value below the top.
fn places(value: &Value, at: &mut Vec<Vec<Value>>, path: &mut Vec<Value>) {
    match value {
        Value::Object(map) => {
            for (key, inner) in map {
                path.push(Value::from(key.as_str()));
                at.push(path.clone());
                places(inner, at, path);
                path.pop();
            }
        }
        Value::Array(items) => {
            for (k, inner) in items.iter().enumerate() {
                path.push(Value::from(k));
                at.push(path.clone());
                places(inner, at, path);
                path.pop();
            }
        }
        _ => {}
    }
}

fn parent_of<'a>(value: &'a mut Value, path: &[Value]) -> &'a mut Value {
    path.iter().fold(value, |v, step| match step {
        Value::String(key) => &mut v[key.as_str()],
        Value::Number(k) => &mut v[k.as_u64().unwrap() as usize],
        _ => unreachable!(),
    })
}

/// One edit of `value` a user might make by mistake: a field removed, renamed or added, a value
/// replaced by one of another shape, an array item removed or repeated, a word changed.
fn mutate(value: &Value, seed: u64) -> Value {
    let mut m = Mutator(seed | 1);
    let mut out = value.clone();
    let mut at = Vec::new();
    places(value, &mut at, &mut Vec::new());
    let path = &at[m.below(at.len())];
    let (last, parent_path) = path.split_last().unwrap();
    let parent = parent_of(&mut out, parent_path);
    match (parent, last) {
        (Value::Object(map), Value::String(key)) => match m.below(4) {
            0 => {
                map.remove(key);
            }
            1 => {
                let inner = map.remove(key).unwrap();
                map.insert(format!("{key}s"), inner);
            }
            2 => {
                map.insert(key.clone(), m.odd_value());
            }
            _ => {
                let words = [
                    "first", "all", "ray", "sweep", "walk", "settle", "clear", "x",
                ];
                let word = Value::from(words[m.below(words.len())]);
                map.insert(key.clone(), word);
            }
        },
        (Value::Array(items), Value::Number(k)) => {
            let k = k.as_u64().unwrap() as usize;
            match m.below(3) {
                0 => {
                    items.remove(k);
                }
                1 => {
                    let copy = items[k].clone();
                    items.insert(k, copy);
                }
                _ => items[k] = m.odd_value(),
            }
        }
        _ => unreachable!(),
    }
    out
}

/// How a file of each kind is loaded: `Ok` when the loader takes it.
fn loads(kind: &str, value: &Value, dir: &Path) -> Result<(), String> {
    let text = serde_json::to_string_pretty(value).unwrap();
    match kind {
        "probes" => parse_probe_set(Path::new("t.probes.json"), &text)
            .map(|_| ())
            .map_err(|e| e.to_string()),
        "results" => parse_results(Path::new("t.results.json"), &text)
            .map(|_| ())
            .map_err(|e| e.to_string()),
        "level" => {
            let path = dir.join("t.level.json");
            std::fs::write(&path, text).unwrap();
            load_level(&path, PathPolicy::default())
                .map(|_| ())
                .map_err(|e| e.to_string())
        }
        _ => unreachable!(),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(600))]

    /// What a schema rejects, the loader rejects: an editor that flags a file by its schema never
    /// flags one the program would take.
    #[test]
    fn what_a_schema_rejects_the_loader_rejects(seed in any::<u64>(), which in 0usize..4) {
        let (kind, file) = [
            ("probes", "scenes/saltfen-quay.probes.json"),
            ("probes", "core/tests/fixtures/check/lane.probes.json"),
            ("level", "core/tests/fixtures/check/lane.level.json"),
            ("results", "core/tests/fixtures/check/lane.results.json"),
        ][which];
        let original = read_json(&repo(file));
        let mutated = mutate(&original, seed);
        let schema = validator(kind);
        if !schema.is_valid(&mutated) {
            let dir = tempfile::tempdir().unwrap();
            let loaded = loads(kind, &mutated, dir.path());
            prop_assert!(
                loaded.is_err(),
                "{file}: the schema rejects this edit but the loader takes it:\n{}\n{}",
                errors(&schema, &mutated),
                serde_json::to_string(&mutated).unwrap()
            );
        }
    }
}

#[test]
fn mutations_are_often_rejected_by_the_schemas() {
    // Guards the property above against a schema that rejects nothing.
    for (kind, file) in [
        ("probes", "core/tests/fixtures/check/lane.probes.json"),
        ("level", "core/tests/fixtures/check/lane.level.json"),
        ("results", "core/tests/fixtures/check/lane.results.json"),
    ] {
        let original = read_json(&repo(file));
        let schema = validator(kind);
        let rejected = (1..=200u64)
            .filter(|&seed| !schema.is_valid(&mutate(&original, seed * 7919)))
            .count();
        assert!(
            rejected >= 60,
            "{kind}: only {rejected} of 200 edits rejected"
        );
    }
}
