//! The crate's modules form one-way layers: no top-level module of the library reaches, in its production
//! code, a module that reaches back to it (STYLE.md: data flows one way). Test code may look anywhere.

mod common;
use std::collections::{BTreeMap, BTreeSet};

/// Which top-level modules each top-level library module names as `crate::X` outside its tests.
fn edges() -> BTreeMap<String, BTreeSet<String>> {
    let mut edges: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    let src = common::root().join("src");
    let mut stack = vec![src.clone()];
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(&dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
                continue;
            }
            let rel = path.strip_prefix(&src).unwrap();
            let top = rel
                .components()
                .next()
                .unwrap()
                .as_os_str()
                .to_string_lossy();
            let module = top.trim_end_matches(".rs").to_string();
            let is_test_file = path.file_name().is_some_and(|n| n == "tests.rs");
            if ["lib", "main", "cli"].contains(&module.as_str()) || is_test_file {
                continue;
            }
            let text = std::fs::read_to_string(&path).unwrap();
            let production = text.split("#[cfg(test)]").next().unwrap();
            for line in production
                .lines()
                .filter(|l| !l.trim_start().starts_with("//"))
            {
                for (i, _) in line.match_indices("crate::") {
                    let name: String = line[i + 7..]
                        .chars()
                        .take_while(|c| c.is_alphanumeric() || *c == '_')
                        .collect();
                    if !name.is_empty() && name != module {
                        edges.entry(module.clone()).or_default().insert(name);
                    }
                }
            }
        }
    }
    edges
}

#[test]
fn the_modules_have_no_import_cycle() {
    let edges = edges();
    assert!(edges.len() > 5, "the scan found the modules: {edges:?}");
    // Depth-first search for a path from each module back to itself.
    for start in edges.keys() {
        let mut stack: Vec<Vec<&str>> = vec![vec![start.as_str()]];
        while let Some(path) = stack.pop() {
            let last = *path.last().unwrap();
            for next in edges.get(last).into_iter().flatten() {
                assert!(
                    next != start,
                    "import cycle: {} -> {next}",
                    path.join(" -> ")
                );
                if !path.contains(&next.as_str()) {
                    let mut longer = path.clone();
                    longer.push(next);
                    stack.push(longer);
                }
            }
        }
    }
}

#[test]
fn units_depend_on_nothing_else_in_the_crate() {
    assert!(edges().get("units").is_none_or(|e| e.is_empty()));
}
