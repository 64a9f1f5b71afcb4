//! The saved state of a [`ContextModel`] (snapshot kind 3).

use alloc::collections::BTreeMap;
use alloc::vec::Vec;

use super::blend::Successors;
use super::{ContextModel, ContextParams};
use crate::error::Result;
use crate::model::snapshot::{read_vint, write_vint, SnapshotState};

/// State layout of a [`ContextModel`] (kind 3): `max_order` (one byte),
/// `increment` and `limit` (vints), the history (u32 little-endian); then
/// per order `0 ..= max_order`: the number of contexts, and per context in
/// increasing key order its key (the previous bytes, most recent lowest), the
/// number of successors and each successor's byte (increasing) and count, all
/// vints but the bytes.
impl SnapshotState for ContextModel {
    const KIND: u16 = 3;

    fn write_state(&self, out: &mut Vec<u8>) {
        out.push(self.params.max_order);
        write_vint(out, self.params.increment);
        write_vint(out, self.params.limit);
        out.extend_from_slice(&self.history.to_le_bytes());
        for order in &self.orders {
            write_vint(out, order.len() as u32);
            for (&key, ctx) in order {
                write_vint(out, key);
                write_vint(out, ctx.counts.len() as u32);
                for &(b, c) in &ctx.counts {
                    out.push(b);
                    write_vint(out, u32::from(c));
                }
            }
        }
    }

    fn read_state(mut state: &[u8]) -> Result<Self> {
        let input = &mut state;
        let bad = |reason| Err(crate::Error::snapshot(reason));
        let Some((&max_order, rest)) = input.split_first() else {
            return bad("context model state is empty");
        };
        *input = rest;
        let params = ContextParams {
            max_order,
            increment: read_vint(input)?,
            limit: read_vint(input)?,
        };
        if params.validate().is_err() {
            return bad("context model state has invalid parameters");
        }
        let Some((history, rest)) = input.split_first_chunk::<4>() else {
            return bad("context model state ends early");
        };
        let history = u32::from_le_bytes(*history);
        *input = rest;
        let mut orders = Vec::with_capacity(usize::from(max_order) + 1);
        for k in 0..=u32::from(max_order) {
            let contexts = read_vint(input)?;
            // A context takes at least four bytes: bound the loop by the input.
            if contexts as usize > input.len() / 4 {
                return bad("context model state declares more contexts than it holds");
            }
            let key_end = if k == 0 { 1u64 } else { 1u64 << (8 * k) };
            let mut order = BTreeMap::new();
            let mut last_key = None;
            for _ in 0..contexts {
                let key = read_vint(input)?;
                if u64::from(key) >= key_end || last_key.is_some_and(|l| key <= l) {
                    return bad("context model state has a bad context key");
                }
                last_key = Some(key);
                let n = read_vint(input)? as usize;
                if n == 0 || n > 256 || n > input.len() / 2 {
                    return bad("context model state has a bad successor count");
                }
                let mut ctx = Successors {
                    counts: Vec::with_capacity(n),
                    total: 0,
                };
                for _ in 0..n {
                    let Some((&b, rest)) = input.split_first() else {
                        return bad("context model state ends early");
                    };
                    *input = rest;
                    let c = read_vint(input)?;
                    if c == 0 || ctx.counts.last().is_some_and(|&(l, _)| b <= l) {
                        return bad("context model state has a bad successor");
                    }
                    ctx.total = ctx.total.saturating_add(c);
                    if ctx.total > params.limit {
                        return bad("context model state has counts above its limit");
                    }
                    ctx.counts.push((b, c as u16));
                }
                order.insert(key, ctx);
            }
            orders.push(order);
        }
        if !input.is_empty() {
            return bad("context model state has trailing bytes");
        }
        ContextModel::from_parts(params, history, orders)
    }
}
