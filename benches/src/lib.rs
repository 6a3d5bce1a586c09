//! Benchmark fixtures of tieline (see `benches/`).
