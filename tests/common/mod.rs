//! Helpers shared by the integration tests.
#![allow(dead_code)]

pub mod ktx2;
pub mod triangles;

/// splitmix64 (common practice, no source): a small deterministic generator.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
    /// Uniform in 0..n.
    pub fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
}

/// The triangles of an index list as `geo` polygons (closed rings), for
/// geo's area and boolean operations as the reference implementation.
pub fn triangle_polygons(
    m: &underdraw::mesh::LayerMesh,
    indices: &[u32],
) -> Vec<geo::Polygon<f64>> {
    indices
        .chunks(3)
        .map(|t| {
            let mut ring: Vec<geo::Coord<f64>> = t
                .iter()
                .map(|&i| {
                    let [x, y] = m.position(i);
                    geo::Coord {
                        x: x as f64,
                        y: y as f64,
                    }
                })
                .collect();
            ring.push(ring[0]);
            geo::Polygon::new(geo::LineString::new(ring), vec![])
        })
        .collect()
}

/// A fresh folder under the system temp dir, named after the test (and
/// this process, and a counter), removed with its contents on drop.
pub struct TempDir(pub std::path::PathBuf);

impl TempDir {
    /// Creates `underdraw-<test>-<pid>-<n>`, emptied if it existed.
    pub fn new(test: &str) -> TempDir {
        use std::sync::atomic::{AtomicUsize, Ordering};
        static N: AtomicUsize = AtomicUsize::new(0);
        let dir = std::env::temp_dir().join(format!(
            "underdraw-{test}-{}-{}",
            std::process::id(),
            N.fetch_add(1, Ordering::Relaxed)
        ));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("create the test folder");
        TempDir(dir)
    }
    /// A path inside the folder.
    pub fn path(&self, rel: &str) -> std::path::PathBuf {
        self.0.join(rel)
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}
