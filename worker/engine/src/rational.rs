//! Exact rational numbers for balancing: `i128` numerator and denominator, always reduced, with
//! checked arithmetic. Overflow is reported, never wrapped; the input limits (coefficient size,
//! atoms per species, species per reaction) keep real equations far below the `i128` range.

use std::cmp::Ordering;
use std::fmt;

/// A reduced fraction with a positive denominator.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Rational {
    num: i128,
    den: i128,
}

/// Arithmetic left the `i128` range.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Overflow;

/// Binary (Stein) gcd: shifts and subtractions only, since 128-bit division is slow.
fn gcd(a: i128, b: i128) -> i128 {
    let (mut a, mut b) = (a.unsigned_abs(), b.unsigned_abs());
    if a == 0 || b == 0 {
        return (a | b) as i128;
    }
    if a == 1 || b == 1 {
        return 1;
    }
    let shift = (a | b).trailing_zeros();
    a >>= a.trailing_zeros();
    loop {
        b >>= b.trailing_zeros();
        if a > b {
            std::mem::swap(&mut a, &mut b);
        }
        b -= a;
        if b == 0 {
            return (a << shift) as i128;
        }
    }
}

/// Greatest common divisor of two non-negative integers (0 when both are 0).
pub fn gcd_i128(a: i128, b: i128) -> i128 {
    gcd(a, b)
}

impl Rational {
    pub const ZERO: Rational = Rational { num: 0, den: 1 };
    pub const ONE: Rational = Rational { num: 1, den: 1 };

    pub fn integer(n: i128) -> Rational {
        Rational { num: n, den: 1 }
    }

    /// `num/den`, reduced.
    ///
    /// # Errors
    /// `Overflow` when `den` is zero or a value cannot be negated.
    pub fn new(num: i128, den: i128) -> Result<Rational, Overflow> {
        if den == 0 {
            return Err(Overflow);
        }
        if den == 1 {
            return Ok(Rational { num, den });
        }
        let g = gcd(num, den).max(1);
        let (mut n, mut d) = (num / g, den / g);
        if d < 0 {
            n = n.checked_neg().ok_or(Overflow)?;
            d = d.checked_neg().ok_or(Overflow)?;
        }
        Ok(Rational { num: n, den: d })
    }

    pub fn numer(self) -> i128 {
        self.num
    }

    pub fn denom(self) -> i128 {
        self.den
    }

    pub fn is_zero(self) -> bool {
        self.num == 0
    }

    pub fn is_integer(self) -> bool {
        self.den == 1
    }

    pub fn signum(self) -> i128 {
        self.num.signum()
    }

    pub fn to_f64(self) -> f64 {
        self.num as f64 / self.den as f64
    }

    pub fn checked_add(self, o: Rational) -> Result<Rational, Overflow> {
        if self.den == 1 && o.den == 1 {
            return Ok(Rational {
                num: self.num.checked_add(o.num).ok_or(Overflow)?,
                den: 1,
            });
        }
        let g = gcd(self.den, o.den).max(1);
        let l = (self.den / g).checked_mul(o.den).ok_or(Overflow)?;
        let a = self.num.checked_mul(l / self.den).ok_or(Overflow)?;
        let b = o.num.checked_mul(l / o.den).ok_or(Overflow)?;
        Rational::new(a.checked_add(b).ok_or(Overflow)?, l)
    }

    pub fn checked_sub(self, o: Rational) -> Result<Rational, Overflow> {
        self.checked_add(o.checked_neg()?)
    }

    pub fn checked_neg(self) -> Result<Rational, Overflow> {
        Ok(Rational {
            num: self.num.checked_neg().ok_or(Overflow)?,
            den: self.den,
        })
    }

    pub fn checked_mul(self, o: Rational) -> Result<Rational, Overflow> {
        if self.den == 1 && o.den == 1 {
            return Ok(Rational {
                num: self.num.checked_mul(o.num).ok_or(Overflow)?,
                den: 1,
            });
        }
        // Cross-reduce first so intermediate products stay small.
        let g1 = gcd(self.num, o.den).max(1);
        let g2 = gcd(o.num, self.den).max(1);
        let n = (self.num / g1).checked_mul(o.num / g2).ok_or(Overflow)?;
        let d = (self.den / g2).checked_mul(o.den / g1).ok_or(Overflow)?;
        Rational::new(n, d)
    }

    pub fn checked_div(self, o: Rational) -> Result<Rational, Overflow> {
        if o.num == 0 {
            return Err(Overflow);
        }
        self.checked_mul(Rational::new(o.den, o.num)?)
    }
}

impl PartialOrd for Rational {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Rational {
    fn cmp(&self, other: &Self) -> Ordering {
        // Denominators are positive; compare in f64 only when the exact products would overflow.
        match (self.num.checked_mul(other.den), other.num.checked_mul(self.den)) {
            (Some(a), Some(b)) => a.cmp(&b),
            _ => self.to_f64().total_cmp(&other.to_f64()),
        }
    }
}

impl fmt::Display for Rational {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.den == 1 {
            write!(f, "{}", self.num)
        } else {
            write!(f, "{}/{}", self.num, self.den)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn arithmetic_is_exact_and_reduced() {
        let a = Rational::new(1, 2).unwrap();
        let b = Rational::new(1, 3).unwrap();
        assert_eq!(a.checked_add(b).unwrap(), Rational::new(5, 6).unwrap());
        assert_eq!(a.checked_sub(b).unwrap(), Rational::new(1, 6).unwrap());
        assert_eq!(a.checked_mul(b).unwrap(), Rational::new(1, 6).unwrap());
        assert_eq!(a.checked_div(b).unwrap(), Rational::new(3, 2).unwrap());
        assert_eq!(Rational::new(4, -8).unwrap().to_string(), "-1/2");
        assert_eq!(Rational::new(-12, 18).unwrap(), Rational::new(-2, 3).unwrap());
        assert_eq!(gcd(0, 0), 0);
        assert_eq!(gcd(-48, 180), 12);
        assert_eq!(gcd(17, 0), 17);
    }

    #[test]
    fn overflow_is_an_error_not_a_wrap() {
        let big = Rational::integer(i128::MAX / 2 + 1);
        assert_eq!(big.checked_add(big), Err(Overflow));
        assert_eq!(big.checked_mul(Rational::integer(3)), Err(Overflow));
        assert_eq!(Rational::new(1, 0), Err(Overflow));
    }
}
