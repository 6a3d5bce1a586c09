//! The saturation line of IAPWS-IF97 (IAPWS R7-97(2012), region 4, Eqs. 30 and 31; W. Wagner
//! et al., J. Eng. Gas Turbines Power 122 (2000) 150): an explicit p_s(T) and its exact
//! inverse T_s(p), valid from 273.15 K to the critical point 647.096 K.
//!
//! The library uses it only as a starting estimate for the IAPWS-95 saturation solver and as
//! an independent cross-check of it; IF97 is not a property model here. The coefficients
//! n1…n10 are those of IF97 Table 34 (from memory + recomputed: they reproduce the IF97
//! check values of Tables 35 and 36).

use crate::error::{Error, Result};

/// n1…n10 of IF97 Table 34 (dimensionless).
const N: [f64; 10] = [
    0.116_705_214_527_67e4,
    -0.724_213_167_032_06e6,
    -0.170_738_469_400_92e2,
    0.120_208_247_024_70e5,
    -0.323_255_503_223_33e7,
    0.149_151_086_135_30e2,
    -0.482_326_573_615_91e4,
    0.405_113_405_420_57e6,
    -0.238_555_575_678_49,
    0.650_175_348_447_98e3,
];

/// Lower end of the region-4 equations, K (IF97: 273.15 K).
pub const T_MIN: f64 = 273.15;
/// Upper end of the region-4 equations: the IF97 critical temperature, K.
pub const T_MAX: f64 = 647.096;
/// Saturation pressure at 273.15 K by Eq. 30, Pa (the lower end in pressure).
pub const P_MIN: f64 = 611.212_677;
/// IF97 critical pressure, Pa.
pub const P_MAX: f64 = 22.064e6;

/// Saturation pressure p_s(T) of IF97 Eq. 30, Pa, for 273.15 K ≤ T ≤ 647.096 K.
/// Outside that range: [`Error::OutsideValidity`].
pub fn saturation_pressure(t: f64) -> Result<f64> {
    if !(T_MIN..=T_MAX).contains(&t) {
        return Err(Error::OutsideValidity {
            what: "temperature".into(),
            value: t,
            min: T_MIN,
            max: T_MAX,
            detail: "IAPWS-IF97 region 4 saturation-pressure equation (Eq. 30)".into(),
        });
    }
    let th = t + N[8] / (t - N[9]);
    let a = th * th + N[0] * th + N[1];
    let b = N[2] * th * th + N[3] * th + N[4];
    let c = N[5] * th * th + N[6] * th + N[7];
    let x = 2.0 * c / (-b + (b * b - 4.0 * a * c).sqrt());
    Ok(x.powi(4) * 1e6)
}

/// Saturation temperature T_s(p) of IF97 Eq. 31, K, for 611.213 Pa ≤ p ≤ 22.064 MPa.
/// Outside that range: [`Error::OutsideValidity`].
pub fn saturation_temperature(p: f64) -> Result<f64> {
    if !(P_MIN * (1.0 - 1e-9)..=P_MAX).contains(&p) {
        return Err(Error::OutsideValidity {
            what: "pressure".into(),
            value: p,
            min: P_MIN,
            max: P_MAX,
            detail: "IAPWS-IF97 region 4 saturation-temperature equation (Eq. 31)".into(),
        });
    }
    let beta = (p / 1e6).powf(0.25);
    let e = beta * beta + N[2] * beta + N[5];
    let f = N[0] * beta * beta + N[3] * beta + N[6];
    let g = N[1] * beta * beta + N[4] * beta + N[7];
    let d = 2.0 * g / (-f - (f * f - 4.0 * e * g).sqrt());
    let s = N[9] + d;
    Ok((s - (s * s - 4.0 * (N[8] + N[9] * d)).sqrt()) / 2.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_and_range() {
        for t in [273.15, 300.0, 450.0, 600.0, 647.0] {
            let p = saturation_pressure(t).unwrap();
            let t2 = saturation_temperature(p).unwrap();
            assert!((t2 - t).abs() < 1e-7 * t, "{t} {t2}");
        }
        assert!((saturation_pressure(T_MIN).unwrap() - P_MIN).abs() < 1e-3);
        assert_eq!(
            saturation_pressure(700.0).unwrap_err().kind(),
            crate::ErrorKind::OutsideValidity
        );
        assert!(saturation_temperature(3e7).is_err());
        assert!(saturation_pressure(f64::NAN).is_err());
    }
}
