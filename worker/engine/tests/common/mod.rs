// Shared by the reference-file tests: read a committed TSV into rows of named columns.

pub struct Tsv {
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
}

impl Tsv {
    pub fn parse(text: &str) -> Tsv {
        let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
        let header = lines.next().expect("header row").split('\t').map(str::to_string).collect();
        let rows = lines.map(|l| l.split('\t').map(str::to_string).collect()).collect();
        Tsv { header, rows }
    }

    pub fn col(&self, name: &str) -> usize {
        self.header
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no column {name}"))
    }
}
