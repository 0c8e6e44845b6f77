//! Building a fleet: sites, carriers and vehicles with invented names, and each tank's vessel,
//! gauge, pressures and nameplate figures.

use fluids::{FluidId, fluid};
use tank::{
    Cylinder, DpUnit, HeadShape, Orientation, barometer_pa_from_elevation, dp_unit_from_pa,
};

use crate::SimError;
use crate::fleet::*;
use crate::rng::Rng;

pub(crate) const DEMO_SITES: [&str; 12] = [
    "Alder Street Bakery Works",
    "Bramwhistle Hospital",
    "Corvane Hops Brewery",
    "Drossgate Steel Fabrication",
    "Embervik Food Freezing",
    "Foxglove Research Campus",
    "Gullspray Bay Fish Processing",
    "Hazelspin Lane Laser Cutting",
    "Ironquill Glassworks",
    "Juniper Court Clinic",
    "Kettlebrim Park Semiconductor",
    "Lumberwisp Dairy",
];
pub(crate) const DEMO_CARRIERS: [&str; 3] = [
    "Bluefrost Haulage",
    "Marrowgate Cryo Transport",
    "Pinewhisk Liquid Lines",
];

pub(crate) fn short_name(f: FluidId) -> &'static str {
    match f {
        FluidId::Nitrogen => "N2",
        FluidId::Oxygen => "O2",
        FluidId::Argon => "AR",
        FluidId::CarbonDioxide => "CO2",
        FluidId::Methane => "CH4",
        FluidId::Hydrogen | FluidId::Parahydrogen => "H2",
    }
}

/// Nameplate NER by fluid and gross volume, % per day: smaller tanks lose a larger share (surface over
/// volume); CO2 tanks at about half. Common practice, no source.
pub fn nameplate_ner_percent_per_day(f: FluidId, gross_volume_m3: f64) -> f64 {
    let base = (0.6 * (gross_volume_m3 / 5.0).powf(-0.4)).clamp(0.12, 1.0);
    if f == FluidId::CarbonDioxide {
        0.5 * base
    } else {
        base
    }
}

pub(crate) struct Build<'a> {
    pub(crate) cfg: &'a FleetConfig,
    pub(crate) rng: Rng,
}

impl Build<'_> {
    pub(crate) fn tank(&mut self, i: usize) -> Result<SimTank, SimError> {
        let rng = &mut self.rng;
        let fluids4 = [
            FluidId::Nitrogen,
            FluidId::Oxygen,
            FluidId::Argon,
            FluidId::CarbonDioxide,
        ];
        let f = fluids4[i % 4];
        let horizontal = (i / 4 + i) % 2 == 1;
        let orientation = if horizontal {
            Orientation::Horizontal
        } else {
            Orientation::Vertical
        };
        let diameter_m = (rng.range(1.6, 3.0) * 20.0).round() / 20.0;
        let length_m = (diameter_m * rng.range(1.6, 4.0) * 10.0).round() / 10.0;
        let heads = if rng.uniform() < 0.5 {
            HeadShape::Ellipsoidal
        } else {
            HeadShape::Torispherical
        };
        let head = heads.head(None, None);
        let cyl =
            Cylinder::new(orientation, diameter_m, length_m, head).map_err(|e| SimError::Tank {
                tank: format!("#{i}"),
                cause: e,
            })?;
        let gross = cyl.gross_volume_m3();
        // two tanks a site: they share its elevation
        let site_rng = &mut Rng::new(self.cfg.seed ^ (0xE1E7 + (i / 2) as u64));
        let elevation_m = (site_rng.range(0.0, 600.0)).round();
        let barometer_pa =
            barometer_pa_from_elevation(elevation_m).map_err(|e| SimError::Tank {
                tank: format!("#{i}"),
                cause: e,
            })?;
        let (lo_barg, width) = if f == FluidId::CarbonDioxide {
            (rng.range(13.0, 13.5), rng.range(0.8, 1.5))
        } else {
            (rng.range(3.0, 12.0), rng.range(1.0, 2.5))
        };
        let hi_barg = (lo_barg + width).min(15.0);
        let band_pa = (lo_barg * 1e5 + barometer_pa, hi_barg * 1e5 + barometer_pa);
        let dp_unit = if i % 3 == 2 {
            DpUnit::Mbar
        } else {
            DpUnit::InH2O
        };
        // span: a round figure above a full tank of liquid saturated at 1 atm
        let cold = fluid(f)
            .saturation_from_pressure(fluid(f).triple().pressure_pa.max(101_325.0) * 1.01)
            .map_err(|e| SimError::Fluid {
                tank: format!("#{i}"),
                cause: e,
            })?;
        let full_dp = tank::STANDARD_GRAVITY * cold.liquid_density_kg_m3 * cyl.inner_height_m();
        let step = if dp_unit == DpUnit::Mbar { 50.0 } else { 25.0 };
        let gauge_span = (dp_unit_from_pa(full_dp * 1.1, dp_unit) / step).ceil() * step;
        let ner = nameplate_ner_percent_per_day(f, gross);
        let true_ner = ner * rng.range(self.cfg.true_ner_factor.0, self.cfg.true_ner_factor.1);
        let interval = rng.range(self.cfg.fill_interval_days.0, self.cfg.fill_interval_days.1);
        let reorder_percent = [20.0, 25.0, 30.0][rng.below(3)];
        let mid_sat = fluid(f)
            .saturation_from_pressure(0.5 * (band_pa.0 + band_pa.1))
            .map_err(|e| SimError::Fluid {
                tank: format!("#{i}"),
                cause: e,
            })?;
        let full_mass = gross * mid_sat.liquid_density_kg_m3;
        let usage_kg_per_day = (0.86 - reorder_percent / 100.0) * full_mass / interval;
        let (site, name) = match self.cfg.naming {
            Naming::Numbered => (format!("S{:04}", i / 2 + 1), format!("T{:05}", i + 1)),
            Naming::Demo => {
                let s = DEMO_SITES[(i / 2) % DEMO_SITES.len()];
                let round = i / (2 * DEMO_SITES.len());
                let site = if round == 0 {
                    s.to_string()
                } else {
                    format!("{s} {}", round + 1)
                };
                let initials: String = s
                    .split_whitespace()
                    .filter_map(|w| w.chars().next())
                    .take(3)
                    .collect();
                (site, format!("{initials}-{}-{}", short_name(f), i + 1))
            }
        };
        Ok(SimTank {
            site,
            name,
            fluid: f,
            orientation,
            diameter_m,
            length_m,
            heads,
            elevation_m,
            barometer_pa,
            dp_unit,
            gauge_span,
            gauge_accuracy_percent: [0.25, 0.5][rng.below(2)],
            relief_barg: (hi_barg + 2.0).min(17.2),
            reorder_percent,
            ner_percent_per_day: (ner * 1000.0).round() / 1000.0,
            true_ner_percent_per_day: true_ner,
            band_pa,
            pressure_unit: if i % 5 == 4 { "psig" } else { "barg" },
            usage_kg_per_day,
            gross_volume_m3: gross,
        })
    }
}
