//! The SHA-256 of the data file taken from the bytes as the CSV reader reads them, so the
//! file is read once and never held whole. A read error is kept so that the caller can
//! name the file in the message, as reading the whole file would.

use std::io::Read;

use sha2::{Digest, Sha256};

/// A reader that hashes what passes through it.
pub struct HashingReader<R> {
    inner: R,
    hasher: Sha256,
    error: Option<String>,
}

impl<R: Read> HashingReader<R> {
    pub fn new(inner: R) -> Self {
        HashingReader {
            inner,
            hasher: Sha256::new(),
            error: None,
        }
    }

    /// The first read error met, as text.
    pub fn error(&self) -> Option<&str> {
        self.error.as_deref()
    }

    /// Reads what is left and returns the lower-case hex SHA-256 of every byte.
    pub fn finish(mut self) -> std::io::Result<String> {
        std::io::copy(&mut self, &mut std::io::sink())?;
        Ok(self
            .hasher
            .finalize()
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect())
    }
}

impl<R: Read> Read for HashingReader<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        match self.inner.read(buf) {
            Ok(n) => {
                self.hasher.update(&buf[..n]);
                Ok(n)
            }
            Err(e) => {
                if e.kind() != std::io::ErrorKind::Interrupted && self.error.is_none() {
                    self.error = Some(e.to_string());
                }
                Err(e)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn digest_of_streamed_bytes_is_the_digest_of_the_whole() {
        // SHA-256("abc"), FIPS 180-2 appendix B.1.
        let h = HashingReader::new(&b"abc"[..]).finish().unwrap();
        assert_eq!(
            h,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        // Partly read through tiny buffers, then finished: the same as all at once.
        let data: Vec<u8> = (0..10_000u32).map(|i| (i * 7 % 251) as u8).collect();
        let mut r = HashingReader::new(&data[..]);
        let mut buf = [0u8; 3];
        for _ in 0..100 {
            r.read_exact(&mut buf).unwrap();
        }
        let whole: String = Sha256::digest(&data)
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect();
        assert_eq!(r.finish().unwrap(), whole);
    }
}
