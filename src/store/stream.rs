//! Reading chain tables row by row, so that summaries never hold every draw: a
//! [`RowReader`] parses one row at a time into one reused [`DrawRow`], with the same rules
//! as [`super::read_chain`] (an unterminated last row is ignored, a broken row is refused),
//! and [`StoredChains`] reads the chains of a run that way, in full or in columns.

use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};

use super::draws::{parse_header, parse_row, DrawRow};
use crate::error::{Error, Result};

/// One chain table, read one complete row at a time.
pub struct RowReader {
    reader: BufReader<File>,
    path: PathBuf,
    origin: String,
    fields: usize,
    k: usize,
    /// Line number of the next row (the header is line 1).
    line_no: usize,
    buf: Vec<u8>,
    row: DrawRow,
}

impl RowReader {
    /// Opens `path` and checks its header.
    pub fn open(path: &Path) -> Result<Self> {
        let f = File::open(path).map_err(|e| Error::io(path, e))?;
        let mut r = RowReader {
            reader: BufReader::with_capacity(1 << 16, f),
            path: path.to_path_buf(),
            origin: path.display().to_string(),
            fields: 0,
            k: 0,
            line_no: 1,
            buf: Vec::new(),
            row: DrawRow::empty(),
        };
        let head = match r.next_line()? {
            Some(h) => h,
            None => {
                return Err(Error::input(format!("{}: empty draw table", r.origin)));
            }
        };
        (r.fields, r.k) = parse_header(&head, &r.origin)?;
        Ok(r)
    }

    /// Number of components of the table.
    pub fn k(&self) -> usize {
        self.k
    }

    /// The next complete line without its line ending, or `None` at the end (a last line
    /// without a newline is a row cut short by a crash, and is not returned).
    fn next_line(&mut self) -> Result<Option<String>> {
        self.buf.clear();
        self.reader
            .read_until(b'\n', &mut self.buf)
            .map_err(|e| Error::io(&self.path, e))?;
        if self.buf.last() != Some(&b'\n') {
            return Ok(None);
        }
        self.buf.pop();
        if self.buf.last() == Some(&b'\r') {
            self.buf.pop();
        }
        // A crash can cut a multi-byte character in half; such a row is refused by the parser.
        Ok(Some(String::from_utf8_lossy(&self.buf).into_owned()))
    }

    /// The next row, or `None` after the last complete one.
    pub fn next_row(&mut self) -> Result<Option<&DrawRow>> {
        let Some(line) = self.next_line()? else {
            return Ok(None);
        };
        self.line_no += 1;
        parse_row(
            &line,
            self.fields,
            self.k,
            &self.origin,
            self.line_no,
            &mut self.row,
        )?;
        Ok(Some(&self.row))
    }
}

/// Values of some columns for the first `len` draws of every chain, one vector per
/// column laid out chain after chain: `values[col][c * len + d]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Columns {
    pub chains: usize,
    pub len: usize,
    pub values: Vec<Vec<f64>>,
}

impl Columns {
    /// Column `col` for every draw of every chain (chain after chain).
    pub fn pooled(&self, col: usize) -> &[f64] {
        &self.values[col]
    }

    /// Column `col` as one vector per chain, the form the diagnostics take.
    pub fn per_chain(&self, col: usize) -> Vec<Vec<f64>> {
        (0..self.chains)
            .map(|c| self.values[col][c * self.len..(c + 1) * self.len].to_vec())
            .collect()
    }
}

/// The chain tables of a run, in the order of `ids`.
#[derive(Debug, Clone)]
pub struct StoredChains {
    pub paths: Vec<PathBuf>,
    pub ids: Vec<u64>,
}

impl StoredChains {
    /// The tables `draws/chain-<i>.csv` for the given chain ids.
    pub fn new(draws_dir: &Path, ids: &[u64]) -> Self {
        StoredChains {
            paths: ids
                .iter()
                .map(|id| draws_dir.join(format!("chain-{id}.csv")))
                .collect(),
            ids: ids.to_vec(),
        }
    }

    /// Calls `f(chain index, row)` for every complete row of every chain, in order, and
    /// returns the number of rows of each chain. Every row is parsed, so a broken table is
    /// refused here as by [`super::read_run_draws`].
    pub fn scan(&self, mut f: impl FnMut(usize, &DrawRow)) -> Result<Vec<usize>> {
        let mut lens = Vec::with_capacity(self.paths.len());
        for (c, path) in self.paths.iter().enumerate() {
            let mut r = RowReader::open(path)?;
            let mut n = 0;
            while let Some(row) = r.next_row()? {
                f(c, row);
                n += 1;
            }
            lens.push(n);
        }
        Ok(lens)
    }

    /// Evaluates `width` columns, `fill(row, out)` writing one value per column into `out`,
    /// for the first `len` rows of every chain, reading one chain at a time. Holds
    /// `width × chains × len` values, never the rows themselves.
    pub fn columns(
        &self,
        len: usize,
        width: usize,
        fill: impl Fn(&DrawRow, &mut [f64]) + Sync,
    ) -> Result<Columns> {
        let (columns, _) =
            self.columns_per_chain(len, width, 1, || (), |_, row, out| fill(row, out))?;
        Ok(columns)
    }

    /// [`Self::columns`] with the chains read on up to `threads` threads at once. Each
    /// chain gets its own state from `init`, which `fill(state, row, out)` may update (the
    /// states come back in chain order). Every value is computed by the same code whatever
    /// the thread count, and the columns are assembled chain after chain, so the result
    /// does not depend on `threads`. Holds the finished columns plus those of the chains
    /// being read (at most 1 + threads/chains times [`Self::columns`]'s memory).
    pub fn columns_per_chain<S: Send>(
        &self,
        len: usize,
        width: usize,
        threads: usize,
        init: impl Fn() -> S + Sync,
        fill: impl Fn(&mut S, &DrawRow, &mut [f64]) + Sync,
    ) -> Result<(Columns, Vec<S>)> {
        let chains = self.paths.len();
        let one = |path: &PathBuf| -> Result<(Vec<Vec<f64>>, S)> {
            let mut state = init();
            let mut values = vec![Vec::with_capacity(len); width];
            let mut out = vec![0.0; width];
            let mut r = RowReader::open(path)?;
            for _ in 0..len {
                let row = r
                    .next_row()?
                    .ok_or_else(|| short_on_second_reading(path, len))?;
                fill(&mut state, row, &mut out);
                for (col, &v) in values.iter_mut().zip(&out) {
                    col.push(v);
                }
            }
            Ok((values, state))
        };
        let mut values = vec![Vec::with_capacity(chains * len); width];
        let mut states = Vec::with_capacity(chains);
        let ids: Vec<usize> = (0..chains).collect();
        for group in ids.chunks(threads.max(1)) {
            let done: Vec<Result<(Vec<Vec<f64>>, S)>> = std::thread::scope(|scope| {
                let handles: Vec<_> = group
                    .iter()
                    .map(|&c| {
                        let one = &one;
                        let path = &self.paths[c];
                        scope.spawn(move || one(path))
                    })
                    .collect();
                handles
                    .into_iter()
                    .map(|h| h.join().unwrap_or_else(|e| std::panic::resume_unwind(e)))
                    .collect()
            });
            for chain in done {
                let (chain_values, state) = chain?;
                for (col, v) in values.iter_mut().zip(chain_values) {
                    col.extend_from_slice(&v);
                }
                states.push(state);
            }
        }
        Ok((
            Columns {
                chains,
                len,
                values,
            },
            states,
        ))
    }
}

/// The error for a table that has fewer rows than the first reading counted.
fn short_on_second_reading(path: &Path, len: usize) -> Error {
    Error::input(format!(
        "{}: fewer than {len} rows on a second reading; was the run changed while it was summarised?",
        path.display()
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::draws::{header, parse_chain};

    fn temp_file(name: &str, text: &str) -> PathBuf {
        let p =
            std::env::temp_dir().join(format!("mixband-stream-{}-{name}.csv", std::process::id()));
        std::fs::write(&p, text).unwrap();
        p
    }

    fn read_all(path: &Path) -> Result<Vec<DrawRow>> {
        let mut r = RowReader::open(path)?;
        let mut rows = Vec::new();
        while let Some(row) = r.next_row()? {
            rows.push(row.clone());
        }
        Ok(rows)
    }

    #[test]
    fn row_reader_reads_what_parse_chain_reads() {
        // The streaming reader and the whole-text parser follow one rule (common practice,
        // no source): complete rows only, CRLF endings accepted, broken rows refused with
        // the same message.
        let h = header(2);
        let cases = [
            format!("{h}1,-3.5,2,1,0.5,0,1,0.5,2,3\n2,-3.25,1,1,0.25,0,1,0.75,2,3\n3,-3.1,1,"),
            format!("{h}1,-3.5,2,1,0.5,0,1,0.5,2,3\r\n2,-3.25,1,1,0.25,0,1,0.75,2,3\r\n"),
            format!("{h}1,-3.5,2,1,0.5,0,1\n2,-3.25,1,1,0.25,0,1,0.75,2,3\n"),
            format!("{h}1,-3.5,2,1,0.5,0,1,0.5,2,inf\n"),
            h.trim_end().to_string(),
        ];
        for (i, text) in cases.iter().enumerate() {
            let p = temp_file(&format!("case{i}"), text);
            let origin = p.display().to_string();
            let want = parse_chain(text, &origin, 1).map(|c| c.rows);
            let got = read_all(&p);
            match (&got, &want) {
                (Ok(a), Ok(b)) => assert_eq!(a, b, "case {i}"),
                (Err(a), Err(b)) => assert_eq!(a.to_string(), b.to_string(), "case {i}"),
                _ => panic!("case {i}: {got:?} against {want:?}"),
            }
            std::fs::remove_file(&p).unwrap();
        }
    }

    #[test]
    fn columns_are_laid_out_chain_after_chain_and_cut_to_len() {
        let h = header(1);
        let a = temp_file(
            "cola",
            &format!("{h}1,-1,1,1,1,10,1\n2,-2,1,1,1,20,1\n3,-3,1,1,1,30,1\n"),
        );
        let b = temp_file("colb", &format!("{h}1,-4,1,1,1,40,1\n2,-5,1,1,1,50,1\n"));
        let s = StoredChains {
            paths: vec![a.clone(), b.clone()],
            ids: vec![1, 2],
        };
        let cols = s
            .columns(2, 2, |r, out| {
                out[0] = r.loglik;
                out[1] = r.mean[0];
            })
            .unwrap();
        assert_eq!(cols.pooled(0), &[-1.0, -2.0, -4.0, -5.0]);
        assert_eq!(cols.per_chain(1), vec![vec![10.0, 20.0], vec![40.0, 50.0]]);
        // A table shorter than asked for is refused, not padded.
        assert!(s.columns(3, 1, |r, out| out[0] = r.loglik).is_err());
        std::fs::remove_file(&a).unwrap();
        std::fs::remove_file(&b).unwrap();
    }

    /// Reading the chains on one or several threads gives the same columns, laid out chain
    /// after chain, and each chain's state sees that chain's rows only, in order, whatever
    /// the thread count.
    #[test]
    fn columns_per_chain_match_columns_for_every_thread_count() {
        let h = header(1);
        let texts = [
            format!("{h}1,-1,1,1,1,10,1\n2,-2,1,1,1,20,1\n3,-3,1,1,1,30,1\n"),
            format!("{h}1,-4,1,1,1,40,1\n2,-5,1,1,1,50,1\n"),
            format!("{h}1,-6,1,1,1,60,1\n2,-7,1,1,1,70,1\n"),
        ];
        let paths: Vec<PathBuf> = texts
            .iter()
            .enumerate()
            .map(|(i, t)| temp_file(&format!("par{i}"), t))
            .collect();
        let s = StoredChains {
            paths: paths.clone(),
            ids: vec![1, 2, 3],
        };
        let fill = |r: &DrawRow, out: &mut [f64]| {
            out[0] = r.loglik;
            out[1] = r.mean[0] * 0.1;
        };
        let expected = vec![
            vec![-1.0, -2.0, -4.0, -5.0, -6.0, -7.0],
            vec![1.0, 2.0, 4.0, 5.0, 6.0, 7.0],
        ];
        assert_eq!(s.columns(2, 2, fill).unwrap().values, expected);
        for threads in [1, 2, 3, 8] {
            let (cols, states) = s
                .columns_per_chain(2, 2, threads, Vec::new, |seen: &mut Vec<f64>, r, out| {
                    seen.push(r.loglik);
                    fill(r, out);
                })
                .unwrap();
            assert_eq!(cols.values, expected, "threads {threads}");
            assert_eq!(
                states,
                vec![vec![-1.0, -2.0], vec![-4.0, -5.0], vec![-6.0, -7.0]]
            );
        }
        assert!(s
            .columns_per_chain(3, 1, 2, || (), |_, r, out| out[0] = r.loglik)
            .is_err());
        for p in paths {
            std::fs::remove_file(&p).unwrap();
        }
    }
}
