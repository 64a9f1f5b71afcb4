//! Unbounded natural numbers for exact reference arithmetic.
//!
//! Little-endian `u32` limbs with no zero limb at the top (so equal values
//! have equal representations). Only what the reference coders need:
//! addition, subtraction, multiplication, shifts, comparison and division by
//! a small divisor. Schoolbook algorithms throughout; speed is not a goal.

use core::cmp::Ordering;

#[derive(Clone, Debug, PartialEq, Eq, Default)]
pub struct Nat(Vec<u32>);

impl Nat {
    pub fn zero() -> Self {
        Nat(Vec::new())
    }

    pub fn from_u64(v: u64) -> Self {
        let mut n = Nat(vec![v as u32, (v >> 32) as u32]);
        n.trim();
        n
    }

    pub fn from_u128(v: u128) -> Self {
        let mut n = Nat(vec![
            v as u32,
            (v >> 32) as u32,
            (v >> 64) as u32,
            (v >> 96) as u32,
        ]);
        n.trim();
        n
    }

    /// `2^bits`.
    pub fn pow2(bits: u32) -> Self {
        Nat::from_u64(1).shl(bits)
    }

    /// The big-endian byte string read as one number.
    pub fn from_be_bytes(bytes: &[u8]) -> Self {
        let mut limbs = Vec::with_capacity(bytes.len() / 4 + 1);
        for chunk in bytes.rchunks(4) {
            let mut v = 0u32;
            for &b in chunk {
                v = (v << 8) | u32::from(b);
            }
            limbs.push(v);
        }
        let mut n = Nat(limbs);
        n.trim();
        n
    }

    fn trim(&mut self) {
        while self.0.last() == Some(&0) {
            self.0.pop();
        }
    }

    pub fn is_zero(&self) -> bool {
        self.0.is_empty()
    }

    /// Number of significant bits (0 for zero).
    pub fn bits(&self) -> u32 {
        match self.0.last() {
            None => 0,
            Some(&top) => 32 * (self.0.len() as u32 - 1) + (32 - top.leading_zeros()),
        }
    }

    pub fn to_u64(&self) -> Option<u64> {
        match self.0.len() {
            0 => Some(0),
            1 => Some(u64::from(self.0[0])),
            2 => Some(u64::from(self.0[0]) | (u64::from(self.0[1]) << 32)),
            _ => None,
        }
    }

    pub fn to_u128(&self) -> Option<u128> {
        if self.0.len() > 4 {
            return None;
        }
        Some(
            self.0
                .iter()
                .rev()
                .fold(0u128, |acc, &l| (acc << 32) | u128::from(l)),
        )
    }

    pub fn add(&self, other: &Nat) -> Nat {
        let n = self.0.len().max(other.0.len());
        let mut out = Vec::with_capacity(n + 1);
        let mut carry = 0u64;
        for i in 0..n {
            let a = u64::from(*self.0.get(i).unwrap_or(&0));
            let b = u64::from(*other.0.get(i).unwrap_or(&0));
            let s = a + b + carry;
            out.push(s as u32);
            carry = s >> 32;
        }
        if carry > 0 {
            out.push(carry as u32);
        }
        let mut r = Nat(out);
        r.trim();
        r
    }

    pub fn add_u64(&self, v: u64) -> Nat {
        self.add(&Nat::from_u64(v))
    }

    /// `self - other`, or `None` when that would be negative.
    pub fn checked_sub(&self, other: &Nat) -> Option<Nat> {
        if *self < *other {
            return None;
        }
        let mut out = Vec::with_capacity(self.0.len());
        let mut borrow = 0i64;
        for i in 0..self.0.len() {
            let a = i64::from(self.0[i]);
            let b = i64::from(*other.0.get(i).unwrap_or(&0));
            let mut d = a - b - borrow;
            if d < 0 {
                d += 1 << 32;
                borrow = 1;
            } else {
                borrow = 0;
            }
            out.push(d as u32);
        }
        debug_assert_eq!(borrow, 0);
        let mut r = Nat(out);
        r.trim();
        Some(r)
    }

    pub fn mul_u32(&self, m: u32) -> Nat {
        let mut out = Vec::with_capacity(self.0.len() + 1);
        let mut carry = 0u64;
        for &l in &self.0 {
            let p = u64::from(l) * u64::from(m) + carry;
            out.push(p as u32);
            carry = p >> 32;
        }
        if carry > 0 {
            out.push(carry as u32);
        }
        let mut r = Nat(out);
        r.trim();
        r
    }

    pub fn mul(&self, other: &Nat) -> Nat {
        if self.is_zero() || other.is_zero() {
            return Nat::zero();
        }
        let mut out = vec![0u32; self.0.len() + other.0.len()];
        for (i, &a) in self.0.iter().enumerate() {
            let mut carry = 0u64;
            for (j, &b) in other.0.iter().enumerate() {
                let t = u64::from(out[i + j]) + u64::from(a) * u64::from(b) + carry;
                out[i + j] = t as u32;
                carry = t >> 32;
            }
            let mut k = i + other.0.len();
            while carry > 0 {
                let t = u64::from(out[k]) + carry;
                out[k] = t as u32;
                carry = t >> 32;
                k += 1;
            }
        }
        let mut r = Nat(out);
        r.trim();
        r
    }

    pub fn shl(&self, bits: u32) -> Nat {
        if self.is_zero() {
            return Nat::zero();
        }
        let limbs = (bits / 32) as usize;
        let rem = bits % 32;
        let mut out = vec![0u32; limbs];
        if rem == 0 {
            out.extend_from_slice(&self.0);
        } else {
            let mut carry = 0u32;
            for &l in &self.0 {
                out.push((l << rem) | carry);
                carry = l >> (32 - rem);
            }
            if carry > 0 {
                out.push(carry);
            }
        }
        let mut r = Nat(out);
        r.trim();
        r
    }

    /// `self >> bits` (rounding down).
    pub fn shr(&self, bits: u32) -> Nat {
        let limbs = (bits / 32) as usize;
        if limbs >= self.0.len() {
            return Nat::zero();
        }
        let rem = bits % 32;
        let src = &self.0[limbs..];
        let mut out = Vec::with_capacity(src.len());
        for i in 0..src.len() {
            let lo = src[i] >> rem;
            let hi = if rem == 0 {
                0
            } else {
                src.get(i + 1).map_or(0, |&h| h << (32 - rem))
            };
            out.push(lo | hi);
        }
        let mut r = Nat(out);
        r.trim();
        r
    }

    /// Quotient and remainder by a non-zero `u32`.
    pub fn div_rem_u32(&self, d: u32) -> (Nat, u32) {
        assert!(d != 0);
        let mut q = vec![0u32; self.0.len()];
        let mut rem = 0u64;
        for i in (0..self.0.len()).rev() {
            let cur = (rem << 32) | u64::from(self.0[i]);
            q[i] = (cur / u64::from(d)) as u32;
            rem = cur % u64::from(d);
        }
        let mut r = Nat(q);
        r.trim();
        (r, rem as u32)
    }
}

impl Ord for Nat {
    fn cmp(&self, other: &Self) -> Ordering {
        self.0
            .len()
            .cmp(&other.0.len())
            .then_with(|| self.0.iter().rev().cmp(other.0.iter().rev()))
    }
}

impl PartialOrd for Nat {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// Compares `a / 2^ea` with `b / 2^eb` exactly.
pub fn cmp_scaled(a: &Nat, ea: u32, b: &Nat, eb: u32) -> Ordering {
    let e = ea.max(eb);
    a.shl(e - ea).cmp(&b.shl(e - eb))
}
