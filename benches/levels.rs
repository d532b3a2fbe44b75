//! `cleave levels` on a large diagonal model, a non-diagonal spin-orbit model, and the 4900-state
//! sector of an eight-site Hubbard ring (building the model is most of that work).
#![expect(missing_docs, reason = "criterion_group! generates an undocumented function")]

use criterion::{criterion_group, criterion_main, Criterion};

fn load(path: &str) -> cleave::model::Model {
    let text = std::fs::read_to_string(path).expect("bench model exists");
    cleave::load(&text).expect("bench model is valid").0
}

fn levels(c: &mut Criterion) {
    let mut group = c.benchmark_group("levels");
    group.sample_size(10);
    for name in ["diagonal_4000", "spin_orbit_oscillator", "hubbard_ring8"] {
        let path = format!("{}/benches/models/{name}.clv", env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(&path).expect("bench model exists");
        group.bench_function(name, |b| {
            b.iter(|| {
                let model = cleave::load(&text).expect("valid").0;
                let spectrum = cleave::spectrum::unperturbed_levels(&model).expect("splits");
                cleave::emit::levels_report(&model, &spectrum, name)
            })
        });
        let _ = load(&path);
    }
    group.finish();
}

criterion_group!(benches, levels);
criterion_main!(benches);
