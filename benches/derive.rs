//! End-to-end `cleave derive` (parse, lower, derive, report) on the speed-target models.
#![expect(missing_docs, reason = "criterion_group! generates an undocumented function")]

use criterion::{criterion_group, criterion_main, Criterion};

fn run(text: &str, order: u32) -> String {
    let model = cleave::load(text).expect("valid model").0;
    let derivation = cleave::engine::derive(&model, &cleave::engine::DeriveOptions::new(order))
        .expect("derivable");
    cleave::emit::report(&model, &derivation, "bench", &Vec::new())
}

fn model_text(name: &str) -> String {
    let dir = env!("CARGO_MANIFEST_DIR");
    let path = if name.starts_with("examples/") {
        format!("{dir}/{name}.clv")
    } else {
        format!("{dir}/benches/models/{name}.clv")
    };
    std::fs::read_to_string(path).expect("model exists")
}

fn derive(c: &mut Criterion) {
    let mut group = c.benchmark_group("derive");
    group.sample_size(10);
    let cases: [(&str, u32); 15] = [
        ("quartic_405", 50),
        ("quartic_405", 100),
        ("rabi", 8),
        ("rabi", 10),
        ("rabi", 12),
        ("rabi", 16),
        ("transmon_resonator", 4),
        ("transmon_resonator", 6),
        ("near_resonant", 3),
        ("near_resonant", 4),
        ("bus", 3),
        ("examples/hubbard_dimer", 20),
        ("examples/spin_one_axial", 20),
        ("hubbard_ring6", 4),
        ("hubbard_ring8", 2),
    ];
    for (name, order) in cases {
        let text = model_text(name);
        let label = format!("{}/order{order}", name.trim_start_matches("examples/"));
        group.bench_function(label, |b| b.iter(|| run(&text, order)));
    }
    group.finish();
}

criterion_group!(benches, derive);
criterion_main!(benches);
