//! The multi-symbol models and their parts: the adaptive and table models,
//! the Fenwick tree and count quantisation (one test binary).

#[allow(dead_code)]
#[path = "../support/mod.rs"]
mod support;

mod model_adaptive;
mod model_fenwick;
mod model_quantize;
mod model_table;
