//! A CSV of `evolve` or `scan` read back for the tests: `#` lines,
//! column names, numeric rows.

use std::fs;
use std::path::Path;

/// A CSV read back: column names and numeric rows (empty field = None).
pub struct Table {
    pub comments: Vec<String>,
    pub columns: Vec<String>,
    pub rows: Vec<Vec<Option<f64>>>,
}

impl Table {
    pub fn read(path: &Path) -> Table {
        Table::parse(&fs::read_to_string(path).unwrap())
    }
    pub fn parse(text: &str) -> Table {
        let comments: Vec<String> = text
            .lines()
            .take_while(|l| l.starts_with('#'))
            .map(String::from)
            .collect();
        let mut lines = text.lines().skip(comments.len());
        let columns: Vec<String> = lines
            .next()
            .expect("a header")
            .split(',')
            .map(String::from)
            .collect();
        let rows = lines
            .map(|l| {
                let r: Vec<Option<f64>> = l
                    .split(',')
                    .map(|f| (!f.is_empty()).then(|| f.parse::<f64>().expect("a number")))
                    .collect();
                assert_eq!(r.len(), columns.len(), "row {l}");
                r
            })
            .collect();
        Table {
            comments,
            columns,
            rows,
        }
    }
    pub fn col(&self, name: &str) -> usize {
        self.columns
            .iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("no column {name} in {:?}", self.columns))
    }
    pub fn values(&self, name: &str) -> Vec<f64> {
        let k = self.col(name);
        self.rows.iter().map(|r| r[k].expect("a value")).collect()
    }
}
