//! A reference MQ coder written as literally as the standards' flowcharts
//! draw it: one bit per renormalisation step, the table walked row by row
//! (index, MPS, SWITCH kept apart), the carry added in place to the byte
//! buffer, and the decoder of ISO/IEC 15444-1 Annex C measuring `C` from the
//! bottom of the interval. The fast coder in `subrange::mq` must agree with
//! it bit for bit.

use subrange::mq::PROBABILITY_STATES;

/// Per-context `I(CX)` and `MPS(CX)`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RefContexts {
    pub index: Vec<u8>,
    pub mps: Vec<u8>,
}

impl RefContexts {
    pub fn new(count: usize) -> Self {
        RefContexts {
            index: vec![0; count],
            mps: vec![0; count],
        }
    }
}

pub struct RefEncoder {
    /// `buf[0]` is the byte before the stream (`BPST - 1`).
    buf: Vec<u8>,
    bp: usize,
    a: u32,
    c: u32,
    ct: u32,
}

impl RefEncoder {
    /// INITENC
    pub fn new() -> Self {
        RefEncoder {
            buf: vec![0],
            bp: 0,
            a: 0x8000,
            c: 0,
            ct: 12,
        }
    }

    pub fn encode(&mut self, cx: &mut RefContexts, i: usize, d: u8) {
        if d == cx.mps[i] {
            self.codemps(cx, i)
        } else {
            self.codelps(cx, i)
        }
    }

    fn codemps(&mut self, cx: &mut RefContexts, i: usize) {
        let row = PROBABILITY_STATES[usize::from(cx.index[i])];
        let qe = u32::from(row.qe);
        self.a -= qe;
        if self.a & 0x8000 == 0 {
            if self.a < qe {
                self.a = qe;
            } else {
                self.c += qe;
            }
            cx.index[i] = row.nmps;
            self.renorme();
        } else {
            self.c += qe;
        }
    }

    fn codelps(&mut self, cx: &mut RefContexts, i: usize) {
        let row = PROBABILITY_STATES[usize::from(cx.index[i])];
        let qe = u32::from(row.qe);
        self.a -= qe;
        if self.a < qe {
            self.c += qe;
        } else {
            self.a = qe;
        }
        if row.switch {
            cx.mps[i] = 1 - cx.mps[i];
        }
        cx.index[i] = row.nlps;
        self.renorme();
    }

    fn renorme(&mut self) {
        loop {
            self.a <<= 1;
            self.c <<= 1;
            self.ct -= 1;
            if self.ct == 0 {
                self.byteout();
            }
            if self.a & 0x8000 != 0 {
                break;
            }
        }
    }

    fn put_at_next(&mut self, byte: u8) {
        self.bp += 1;
        if self.bp == self.buf.len() {
            self.buf.push(byte);
        } else {
            self.buf[self.bp] = byte;
        }
    }

    fn byteout(&mut self) {
        if self.buf[self.bp] == 0xFF {
            self.put_at_next((self.c >> 20) as u8);
            self.c &= 0xF_FFFF;
            self.ct = 7;
        } else if self.c < 0x0800_0000 {
            self.put_at_next((self.c >> 19) as u8);
            self.c &= 0x7_FFFF;
            self.ct = 8;
        } else {
            self.buf[self.bp] += 1;
            if self.buf[self.bp] == 0xFF {
                self.c &= 0x07FF_FFFF;
                self.put_at_next((self.c >> 20) as u8);
                self.c &= 0xF_FFFF;
                self.ct = 7;
            } else {
                self.put_at_next((self.c >> 19) as u8);
                self.c &= 0x7_FFFF;
                self.ct = 8;
            }
        }
    }

    fn setbits(&mut self) {
        let tempc = self.c + self.a;
        self.c |= 0xFFFF;
        if self.c >= tempc {
            self.c -= 0x8000;
        }
    }

    /// FLUSH, then the bi-level marker (`marker`) or the wavelet ending.
    pub fn finish(mut self, marker: bool) -> Vec<u8> {
        self.setbits();
        self.c <<= self.ct;
        self.byteout();
        self.c <<= self.ct;
        self.byteout();
        if marker {
            // The stream is BPST..=BP after the marker is placed.
            if self.buf[self.bp] != 0xFF {
                self.put_at_next(0xFF);
            }
            self.put_at_next(0xAC);
            self.buf[1..=self.bp].to_vec()
        } else {
            // The stream is BPST..BP, BP advanced past B unless it is 0xFF.
            if self.buf[self.bp] != 0xFF {
                self.bp += 1;
            }
            self.buf[1..self.bp].to_vec()
        }
    }
}

pub struct RefDecoder<'a> {
    data: &'a [u8],
    bp: usize,
    a: u32,
    c: u32,
    ct: u32,
}

impl<'a> RefDecoder<'a> {
    fn byte(&self, at: usize) -> u32 {
        u32::from(self.data.get(at).copied().unwrap_or(0xFF))
    }

    /// INITDEC
    pub fn new(data: &'a [u8]) -> Self {
        let mut d = RefDecoder {
            data,
            bp: 0,
            a: 0,
            c: 0,
            ct: 0,
        };
        d.c = d.byte(0) << 16;
        d.bytein();
        d.c <<= 7;
        d.ct -= 7;
        d.a = 0x8000;
        d
    }

    fn bytein(&mut self) {
        if self.byte(self.bp) == 0xFF {
            if self.byte(self.bp + 1) > 0x8F {
                self.c += 0xFF00;
                self.ct = 8;
            } else {
                self.bp += 1;
                self.c += self.byte(self.bp) << 9;
                self.ct = 7;
            }
        } else {
            self.bp += 1;
            self.c += self.byte(self.bp) << 8;
            self.ct = 8;
        }
    }

    /// DECODE (Chigh compared with Qe: the code value above the bottom).
    pub fn decode(&mut self, cx: &mut RefContexts, i: usize) -> u8 {
        let row = PROBABILITY_STATES[usize::from(cx.index[i])];
        let qe = u32::from(row.qe);
        self.a -= qe;
        if (self.c >> 16) < qe {
            let d = self.lps_exchange(cx, i);
            self.renormd();
            d
        } else {
            self.c -= qe << 16;
            if self.a & 0x8000 == 0 {
                let d = self.mps_exchange(cx, i);
                self.renormd();
                d
            } else {
                cx.mps[i]
            }
        }
    }

    fn mps_exchange(&mut self, cx: &mut RefContexts, i: usize) -> u8 {
        let row = PROBABILITY_STATES[usize::from(cx.index[i])];
        let qe = u32::from(row.qe);
        if self.a < qe {
            let d = 1 - cx.mps[i];
            if row.switch {
                cx.mps[i] = 1 - cx.mps[i];
            }
            cx.index[i] = row.nlps;
            d
        } else {
            cx.index[i] = row.nmps;
            cx.mps[i]
        }
    }

    fn lps_exchange(&mut self, cx: &mut RefContexts, i: usize) -> u8 {
        let row = PROBABILITY_STATES[usize::from(cx.index[i])];
        let qe = u32::from(row.qe);
        if self.a < qe {
            self.a = qe;
            cx.index[i] = row.nmps;
            cx.mps[i]
        } else {
            self.a = qe;
            let d = 1 - cx.mps[i];
            if row.switch {
                cx.mps[i] = 1 - cx.mps[i];
            }
            cx.index[i] = row.nlps;
            d
        }
    }

    fn renormd(&mut self) {
        loop {
            if self.ct == 0 {
                self.bytein();
            }
            self.a <<= 1;
            self.c <<= 1;
            self.ct -= 1;
            if self.a & 0x8000 != 0 {
                break;
            }
        }
    }
}

/// Clears the top bit of every byte in 0x80..=0x8F that follows a 0xFF, so
/// that arbitrary bytes become comparable input. Such a byte carries into the
/// preceding 0xFF; an encoder only does that where the interval leaves room,
/// but in arbitrary bytes it can push the code value past the top of the
/// interval, where the two decoder forms (measured from the top or from the
/// bottom) part ways. Valid carries are covered by the round trips.
pub fn respect_stuffing(data: &mut [u8]) {
    for i in 1..data.len() {
        if data[i - 1] == 0xFF && (0x80..=0x8F).contains(&data[i]) {
            data[i] &= 0x7F;
        }
    }
}
