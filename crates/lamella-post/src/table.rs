//! CSV tables with a header row whose column names carry their units (`time_s`, `u_m_per_s`).

/// A CSV document of equal-length columns; values are written with full precision
/// (`{:e}`, shortest round-trip form), NaN as an empty cell.
pub fn csv_document(headers: &[&str], columns: &[&[f64]]) -> Result<String, String> {
    if headers.len() != columns.len() {
        return Err(format!(
            "{} headers for {} columns",
            headers.len(),
            columns.len()
        ));
    }
    let rows = columns.first().map_or(0, |c| c.len());
    if let Some((h, c)) = headers.iter().zip(columns).find(|(_, c)| c.len() != rows) {
        return Err(format!(
            "column {h} has {} rows, the first has {rows}",
            c.len()
        ));
    }
    let mut out = headers.join(",");
    out.push('\n');
    for r in 0..rows {
        let cells: Vec<String> = columns
            .iter()
            .map(|c| {
                if c[r].is_nan() {
                    String::new()
                } else {
                    format!("{:e}", c[r])
                }
            })
            .collect();
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_header_and_rows() {
        let t = [0.0, 0.5];
        let u = [1.25e-5, f64::NAN];
        let text = csv_document(&["time_s", "u_m_per_s"], &[&t, &u]).unwrap();
        assert_eq!(text, "time_s,u_m_per_s\n0e0,1.25e-5\n5e-1,\n");
        let parsed: f64 = text
            .lines()
            .nth(1)
            .unwrap()
            .split(',')
            .nth(1)
            .unwrap()
            .parse()
            .unwrap();
        assert_eq!(parsed, 1.25e-5);
        assert!(csv_document(&["a"], &[&t, &u]).is_err());
        assert!(csv_document(&["a", "b"], &[&t, &[1.0]]).is_err());
    }
}
