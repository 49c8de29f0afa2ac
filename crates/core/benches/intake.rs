//! Benchmark of reading a large table: a generated SYNTHETIC band table of 100 000 rows
//! (v′, v″, ν, σ; see benches/common) through `intake::read_table` with every choice detected
//! (delimiter, header, column roles, units, kind) and every row validated and kept.

#[path = "common/mod.rs"]
mod common;

use criterion::{Criterion, criterion_group, criterion_main};
use rungs_core::intake::{IntakeOptions, read_table};

fn bench(c: &mut Criterion) {
    let text = common::bands_table(common::TABLE_ROWS);
    let options = IntakeOptions::default();
    let data = read_table(&text, &options).expect("the table reads");
    assert_eq!(data.usable_count(), common::TABLE_ROWS);
    c.bench_function("read_table, 100000-row band table", |b| {
        b.iter(|| read_table(std::hint::black_box(&text), &options).expect("the table reads"))
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = bench
}
criterion_main!(benches);
