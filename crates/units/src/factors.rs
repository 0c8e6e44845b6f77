//! Conversion factors to SI. Sources: NIST Special Publication 811 (2008), appendix B.8 and B.9, and
//! the conventional inch of water of NIST SP 811 (1000 kg/m³ × 0.0254 m × g_n).

/// Standard acceleration of gravity, m/s² (CGPM 1901; NIST SP 811 B.8).
pub const STANDARD_GRAVITY_M_S2: f64 = 9.806_65;
/// One standard atmosphere, Pa (exact by definition).
pub const STANDARD_ATMOSPHERE_PA: f64 = 101_325.0;
/// One bar, Pa (exact).
pub const BAR_PA: f64 = 100_000.0;
/// One inch, m (exact, international inch).
pub const INCH_M: f64 = 0.0254;
/// One foot, m (exact).
pub const FOOT_M: f64 = 0.3048;
/// One avoirdupois pound, kg (exact).
pub const POUND_KG: f64 = 0.453_592_37;
/// One pound-force, N (exact: lb × g_n).
pub const POUND_FORCE_N: f64 = POUND_KG * STANDARD_GRAVITY_M_S2;
/// One psi (pound-force per square inch), Pa: 6894.757 Pa (NIST SP 811 gives 6.894 757 E+03).
pub const PSI_PA: f64 = POUND_FORCE_N / (INCH_M * INCH_M);
/// The conventional inch of water: 1000 kg/m³ × 0.0254 m × g_n = 249.088 91 Pa (NIST SP 811:
/// "inch of water, conventional" 2.490 889 E+02 Pa).
pub const INCH_WATER_CONVENTIONAL_PA: f64 = 1000.0 * INCH_M * STANDARD_GRAVITY_M_S2;
/// The inch of water at 60 °F: 248.84 Pa (NIST SP 811: 2.4884 E+02).
pub const INCH_WATER_60F_PA: f64 = 248.84;
/// The inch of water at 39.2 °F (4 °C): 249.082 Pa (NIST SP 811: 2.490 82 E+02).
pub const INCH_WATER_4C_PA: f64 = 249.082;
/// The conventional millimetre of water: 1000 kg/m³ × 0.001 m × g_n = 9.806 65 Pa (NIST SP 811).
pub const MM_WATER_CONVENTIONAL_PA: f64 = 1000.0 * 0.001 * STANDARD_GRAVITY_M_S2;
/// Zero degrees Celsius in kelvin (exact).
pub const CELSIUS_ZERO_K: f64 = 273.15;
/// One metric tonne, kg.
pub const TONNE_KG: f64 = 1000.0;
/// One cubic foot, m³ (exact: 0.3048³).
pub const CUBIC_FOOT_M3: f64 = FOOT_M * FOOT_M * FOOT_M;
/// Normal conditions for Nm³: 0 °C and 101.325 kPa (DIN 1343).
pub const NORMAL_TEMPERATURE_K: f64 = CELSIUS_ZERO_K;
/// Normal pressure for Nm³, Pa.
pub const NORMAL_PRESSURE_PA: f64 = STANDARD_ATMOSPHERE_PA;
/// Standard conditions for scf in the US industrial-gas trade: 70 °F = 294.261 K.
pub const SCF_TEMPERATURE_K: f64 = (70.0 - 32.0) * 5.0 / 9.0 + CELSIUS_ZERO_K;
/// Standard pressure for scf: 14.696 psia.
pub const SCF_PRESSURE_PA: f64 = 14.696 * PSI_PA;
