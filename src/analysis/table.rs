//! Plain CSV tables: a header row, then one row per record; numbers in full precision
//! (shortest round-trip form), a missing value as an empty cell (NaN in pandas, NA in R).

use super::AnalysisError;
use std::io::Write;
use std::path::Path;

/// One cell.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    /// Text (quoted when it needs to be).
    Text(String),
    /// A number (NaN and infinities are written as an empty cell).
    Num(f64),
    /// A count.
    Int(i64),
    /// Missing.
    Empty,
}

impl From<&str> for Cell {
    fn from(s: &str) -> Self {
        Cell::Text(s.to_string())
    }
}
impl From<String> for Cell {
    fn from(s: String) -> Self {
        Cell::Text(s)
    }
}
impl From<f64> for Cell {
    fn from(x: f64) -> Self {
        Cell::Num(x)
    }
}
impl From<Option<f64>> for Cell {
    fn from(x: Option<f64>) -> Self {
        x.map_or(Cell::Empty, Cell::Num)
    }
}
impl From<u64> for Cell {
    fn from(x: u64) -> Self {
        Cell::Int(x as i64)
    }
}
impl From<u32> for Cell {
    fn from(x: u32) -> Self {
        Cell::Int(x as i64)
    }
}
impl From<usize> for Cell {
    fn from(x: usize) -> Self {
        Cell::Int(x as i64)
    }
}
impl From<bool> for Cell {
    fn from(x: bool) -> Self {
        Cell::Int(x as i64)
    }
}

/// A table in memory (tables here are small: one row per session, epoch or turn).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Table {
    /// Column names.
    pub header: Vec<String>,
    /// Rows, each as long as the header.
    pub rows: Vec<Vec<Cell>>,
}

impl Table {
    /// An empty table with these columns.
    pub fn new(header: &[&str]) -> Self {
        Self {
            header: header.iter().map(|s| s.to_string()).collect(),
            rows: Vec::new(),
        }
    }

    /// Appends a row (panics in debug builds on a length mismatch: a programming error).
    pub fn push(&mut self, row: Vec<Cell>) {
        debug_assert_eq!(
            row.len(),
            self.header.len(),
            "row length vs {:?}",
            self.header
        );
        self.rows.push(row);
    }

    /// The CSV text.
    pub fn to_csv(&self) -> String {
        let mut out = String::new();
        let head: Vec<String> = self.header.iter().map(|h| quote(h)).collect();
        out.push_str(&head.join(","));
        out.push('\n');
        for row in &self.rows {
            let cells: Vec<String> = row.iter().map(format_cell).collect();
            out.push_str(&cells.join(","));
            out.push('\n');
        }
        out
    }

    /// Writes the CSV to `path` (via a temporary file and a rename, so a reader never sees a
    /// half-written table).
    pub fn write(&self, path: &Path) -> Result<(), AnalysisError> {
        let tmp = path.with_extension("csv.tmp");
        let mut f = std::fs::File::create(&tmp).map_err(|e| AnalysisError::io(&tmp, e))?;
        f.write_all(self.to_csv().as_bytes())
            .map_err(|e| AnalysisError::io(&tmp, e))?;
        drop(f);
        std::fs::rename(&tmp, path).map_err(|e| AnalysisError::io(path, e))
    }
}

/// Formats one cell.
pub fn format_cell(c: &Cell) -> String {
    match c {
        Cell::Text(s) => quote(s),
        // Shortest round-trip form; tiny values (p-values) in exponent form, which pandas and
        // R read, instead of hundreds of zeros.
        Cell::Num(x) if x.is_finite() && *x != 0.0 && x.abs() < 1e-5 => format!("{x:e}"),
        Cell::Num(x) if x.is_finite() => format!("{x}"),
        Cell::Num(_) | Cell::Empty => String::new(),
        Cell::Int(i) => i.to_string(),
    }
}

/// Quotes a text cell when it holds a comma, a quote or a line break.
pub fn quote(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_quotes_and_empties() {
        let mut t = Table::new(&["a", "b", "c"]);
        t.push(vec!["x,y".into(), Cell::Num(f64::NAN), Cell::Num(0.25)]);
        t.push(vec!["say \"hi\"".into(), Cell::Empty, Cell::Int(3)]);
        assert_eq!(t.to_csv(), "a,b,c\n\"x,y\",,0.25\n\"say \"\"hi\"\"\",,3\n");
    }
}
