use std::time::Instant;
fn main() {
    let t0 = Instant::now();
    let study = radforce::scenario::load_file(std::path::Path::new("data/torsion-vacuum-20w.toml"))
        .unwrap();
    let threads: usize = std::env::args()
        .nth(1)
        .map(|s| s.parse().unwrap())
        .unwrap_or(2);
    radforce::engine::with_threads(Some(threads), || {
        let t = Instant::now();
        let s =
            radforce::engine::simulate(&study, radforce::engine::Plan::new(10_000_000, 1)).unwrap();
        let t1 = t.elapsed();
        let t = Instant::now();
        let f = radforce::analysis::findings(&study, &s, None);
        let t2 = t.elapsed();
        let t = Instant::now();
        let j =
            radforce::report::json::report_value(&radforce::report::Report::Run(&f)).to_string();
        let t3 = t.elapsed();
        let t = Instant::now();
        drop(s);
        let t4 = t.elapsed();
        println!(
            "simulate {t1:?} findings {t2:?} json {t3:?} ({}) drop {t4:?} total {:?}",
            j.len(),
            t0.elapsed()
        );
    })
    .unwrap();
}
