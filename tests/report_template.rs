//! Report templates: built-ins parse, unknown keys and names give useful errors.

use hazebook::report::ReportError;
use hazebook::report::template::{self, SheetKind};

fn message(e: ReportError) -> String {
    e.to_string()
}

#[test]
fn builtin_templates_parse_and_are_named() {
    let all = template::builtin();
    let names: Vec<&str> = all.iter().map(|t| t.0).collect();
    assert_eq!(names, ["full", "brief", "monthly", "fluxes"]);
    for (name, description, _) in all {
        let t = template::load(name).unwrap();
        assert_eq!(t.name, name);
        assert!(!description.is_empty());
    }
    let full = template::load(template::DEFAULT).unwrap();
    let kinds: Vec<SheetKind> = full.sheets.iter().map(|s| s.kind).collect();
    for k in [
        SheetKind::About,
        SheetKind::Results,
        SheetKind::Summary,
        SheetKind::Efficiency,
        SheetKind::Charts,
        SheetKind::Rejected,
    ] {
        assert!(kinds.contains(&k), "full lacks {k:?}");
    }
    let brief = template::load("brief").unwrap();
    assert!(!brief.sheets.iter().any(|s| s.kind == SheetKind::Results));
}

#[test]
fn unknown_key_names_the_line_and_the_known_keys() {
    let text =
        "name = \"x\"\n\n[[sheet]]\nname = \"Results\"\nkind = \"results\"\ncolums = [\"all\"]\n";
    let m = message(template::parse(text, "mine.toml").unwrap_err());
    assert!(m.contains("mine.toml"), "{m}");
    assert!(m.contains("line 6"), "{m}");
    assert!(m.contains("unknown key `colums`"), "{m}");
    for k in [
        "name",
        "kind",
        "columns",
        "group_by",
        "quantities",
        "statistics",
        "charts",
    ] {
        assert!(m.contains(k), "{m} lacks {k}");
    }
    let top = "name = \"x\"\nsheets = 3\n";
    let m = message(template::parse(top, "t").unwrap_err());
    assert!(
        m.contains("line 2")
            && m.contains(
                "known keys: name, description, formats, widths, min_observations_per_day, propagate_uncertainty, sheet"
            ),
        "{m}"
    );
}

#[test]
fn unknown_values_are_explained() {
    let bad_kind = "name = \"x\"\n[[sheet]]\nname = \"A\"\nkind = \"pivot\"\n";
    let m = message(template::parse(bad_kind, "t").unwrap_err());
    assert!(
        m.contains("line 4") && m.contains("about") && m.contains("rejected"),
        "{m}"
    );
    let bad_col =
        "name = \"x\"\n[[sheet]]\nname = \"R\"\nkind = \"results\"\ncolumns = [\"dre_moon\"]\n";
    let m = message(template::parse(bad_col, "t").unwrap_err());
    assert!(
        m.contains("unknown column `dre_moon`") && m.contains("dre_toa_24h"),
        "{m}"
    );
    let bad_group =
        "name = \"x\"\n[[sheet]]\nname = \"S\"\nkind = \"summary\"\ngroup_by = [\"week\"]\n";
    let m = message(template::parse(bad_group, "t").unwrap_err());
    assert!(
        m.contains("unknown group key `week`") && m.contains("season"),
        "{m}"
    );
    let misplaced =
        "name = \"x\"\n[[sheet]]\nname = \"A\"\nkind = \"about\"\ncolumns = [\"all\"]\n";
    let m = message(template::parse(misplaced, "t").unwrap_err());
    assert!(m.contains("`columns` does not apply"), "{m}");
    let long = "name = \"x\"\n[[sheet]]\nname = \"A name far longer than thirty-one characters\"\nkind = \"about\"\n";
    assert!(message(template::parse(long, "t").unwrap_err()).contains("31"));
    let dup = "name = \"x\"\n[[sheet]]\nname = \"A\"\nkind = \"about\"\n[[sheet]]\nname = \"a\"\nkind = \"rejected\"\n";
    assert!(message(template::parse(dup, "t").unwrap_err()).contains("names must differ"));
}

#[test]
fn malformed_toml_names_the_line() {
    let m = message(template::parse("name = \"x\"\n[[sheet]]\nname = \n", "t").unwrap_err());
    assert!(m.contains("line 3"), "{m}");
    let m = message(
        template::parse("name = \"x\"\n[[sheet]]\nname = \"A\"\nkind = 3\n", "t").unwrap_err(),
    );
    assert!(m.contains("line 4"), "{m}");
    let m = message(
        template::parse(
            "name = \"x\"\n[formats]\ndre = \"0.0\"\nwatts = \"0\"\n",
            "t",
        )
        .unwrap_err(),
    );
    assert!(
        m.contains("line 4") && m.contains("unknown key `watts`") && m.contains("heating"),
        "{m}"
    );
}

#[test]
fn unknown_name_lists_the_builtins_and_files_load() {
    let m = message(template::load("fancy").unwrap_err());
    assert!(m.contains("full, brief, monthly"), "{m}");
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("mine.toml");
    let (_, _, text) = template::builtin()[0];
    std::fs::write(&p, text.replace("name = \"full\"", "name = \"mine\"")).unwrap();
    let t = template::load(p.to_str().unwrap()).unwrap();
    assert_eq!(t.name, "mine");
    let missing = dir.path().join("absent.toml");
    let m = message(template::load(missing.to_str().unwrap()).unwrap_err());
    assert!(m.contains("cannot read"), "{m}");
}
