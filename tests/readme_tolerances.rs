//! The README's accuracy table quotes `polytrope::tolerance::TABLE` exactly
//! (one source of truth: the code; this test keeps the docs honest).

use polytrope::tolerance::TABLE;

/// The number in a table cell; NaN (which fails every comparison) if none.
fn parse(s: &str) -> f64 {
    s.trim().parse().unwrap_or(f64::NAN)
}

#[test]
fn readme_table_matches_code() {
    let readme = include_str!("../README.md");
    let start = readme
        .find("<!-- tolerance-table:start -->")
        .expect("start marker");
    let end = readme
        .find("<!-- tolerance-table:end -->")
        .expect("end marker");
    let rows: Vec<Vec<&str>> = readme[start..end]
        .lines()
        .filter(|l| l.starts_with('|') && !l.starts_with("|---") && !l.starts_with("| quantity"))
        .map(|l| l.trim_matches('|').split('|').map(str::trim).collect())
        .collect();
    assert_eq!(rows.len(), TABLE.len(), "one README row per tolerance");
    for (row, tol) in rows.iter().zip(TABLE.iter()) {
        assert_eq!(row[0], tol.quantity);
        assert_eq!(parse(row[1]), tol.rtol, "{}", tol.quantity);
        assert_eq!(parse(row[2]), tol.atol, "{}", tol.quantity);
        assert_eq!(parse(row[3]), tol.approx_rtol, "{}", tol.quantity);
        assert_eq!(parse(row[4]), tol.approx_atol, "{}", tol.quantity);
    }
}
