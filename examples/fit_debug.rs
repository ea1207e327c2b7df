use underdraw::{cut::fit_layer, io::load_alpha, settings::CutSettings};
fn main() {
    let path = std::env::args().nth(1).unwrap();
    let budget: usize = std::env::args()
        .nth(2)
        .map(|s| s.parse().unwrap())
        .unwrap_or(64);
    let map = load_alpha(std::path::Path::new(&path)).unwrap();
    let s = CutSettings {
        budget,
        ..Default::default()
    };
    let o = fit_layer(&map, &s);
    for p in &o.fit.opaque {
        eprintln!(
            "opaque outer {} holes {:?}",
            p.outer.len(),
            p.holes.iter().map(|h| h.len()).collect::<Vec<_>>()
        );
    }
    for p in &o.fit.cover {
        eprintln!(
            "cover outer {} holes {:?}",
            p.outer.len(),
            p.holes.iter().map(|h| h.len()).collect::<Vec<_>>()
        );
    }
}
