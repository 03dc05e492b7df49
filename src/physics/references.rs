//! The published methods the physics core uses, for the report's About sheet.

/// One published source and what the core uses it for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Reference {
    /// Short key, author–year style.
    pub key: &'static str,
    /// Full citation.
    pub citation: &'static str,
    /// What it is used for.
    pub used_for: &'static str,
}

/// Every method the physics core uses, in the order a calculation meets them.
pub const METHODS: &[Reference] = &[
    Reference {
        key: "Reda & Andreas 2004",
        citation: "Reda, I. & Andreas, A. (2004), Solar position algorithm for solar radiation applications, Solar Energy 76, 577–589 (NREL SPA).",
        used_for: "Solar zenith angle and Earth–Sun distance at the measurement time.",
    },
    Reference {
        key: "Spencer 1971",
        citation: "Spencer, J. W. (1971), Fourier series representation of the position of the Sun, Search 2(5), 172; as given in Iqbal, M. (1983), An Introduction to Solar Radiation, Academic Press.",
        used_for: "Declination and Earth–Sun distance factor of the day for 24-hour means.",
    },
    Reference {
        key: "Gauss–Legendre quadrature",
        citation: "Abramowitz, M. & Stegun, I. A. (1964), Handbook of Mathematical Functions, § 25.4.29.",
        used_for: "Integration over hour angle from sunrise to sunset (24-hour means); hemispheric mean of the ocean albedo.",
    },
    Reference {
        key: "ASTM G173-03",
        citation: "ASTM G173-03 (2012), Standard Tables for Reference Solar Spectral Irradiances, extraterrestrial spectrum.",
        used_for: "Spectral shape of the incident sunlight, integrated into shortwave bands 0.28–4.0 µm.",
    },
    Reference {
        key: "Kopp & Lean 2011",
        citation: "Kopp, G. & Lean, J. L. (2011), A new, lower value of total solar irradiance: evidence and climate significance, Geophys. Res. Lett. 38, L01706.",
        used_for: "Default solar constant 1361 W m⁻².",
    },
    Reference {
        key: "U.S. Standard Atmosphere 1976",
        citation: "NOAA, NASA & USAF (1976), U.S. Standard Atmosphere, 1976, U.S. Government Printing Office, Washington D.C.",
        used_for: "Surface pressure from station altitude; pressure at the aerosol base and top.",
    },
    Reference {
        key: "Bodhaine et al. 1999",
        citation: "Bodhaine, B. A., Wood, N. B., Dutton, E. G. & Slusser, J. R. (1999), On Rayleigh optical depth calculations, J. Atmos. Oceanic Technol. 16, 1854–1861.",
        used_for: "Rayleigh optical depth, scaled by surface pressure.",
    },
    Reference {
        key: "Bird & Riordan 1986",
        citation: "Bird, R. E. & Riordan, C. (1986), Simple solar spectral model for direct and diffuse irradiance on horizontal and tilted planes at the Earth's surface for cloudless atmospheres, J. Climate Appl. Meteor. 25, 87–97.",
        used_for: "Ozone, water-vapour and mixed-gas absorption coefficients and transmittances.",
    },
    Reference {
        key: "Kasten & Young 1989",
        citation: "Kasten, F. & Young, A. T. (1989), Revised optical air mass tables and approximation formula, Appl. Opt. 28, 4735–4738.",
        used_for: "Relative optical air mass of the gas-absorption path.",
    },
    Reference {
        key: "Ångström 1929",
        citation: "Ångström, A. (1929), On the atmospheric transmission of sun radiation and on dust in the air, Geogr. Ann. 11, 156–166.",
        used_for: "Spectral dependence of the aerosol optical depth.",
    },
    Reference {
        key: "Taylor et al. 1996",
        citation: "Taylor, J. P., Edwards, J. M., Glew, M. D., Hignett, P. & Slingo, A. (1996), Studies with a flexible new radiation code. II: Comparisons with aircraft short-wave observations, Q. J. R. Meteorol. Soc. 122, 839–861.",
        used_for: "Solar-zenith-dependent open-ocean albedo.",
    },
    Reference {
        key: "Joseph, Wiscombe & Weinman 1976",
        citation: "Joseph, J. H., Wiscombe, W. J. & Weinman, J. A. (1976), The delta-Eddington approximation for radiative flux transfer, J. Atmos. Sci. 33, 2452–2459.",
        used_for: "Default two-stream closure (delta-Eddington) and the delta scaling of the phase function.",
    },
    Reference {
        key: "Meador & Weaver 1980",
        citation: "Meador, W. E. & Weaver, W. R. (1980), Two-stream approximations to radiative transfer in planetary atmospheres: a unified description of existing methods and a new improvement, J. Atmos. Sci. 37, 630–643.",
        used_for: "General two-stream solution of a layer; Eddington, quadrature and hemispheric-mean closures.",
    },
    Reference {
        key: "Toon et al. 1989",
        citation: "Toon, O. B., McKay, C. P., Ackerman, T. P. & Santhanam, K. (1989), Rapid calculation of radiative heating rates and photodissociation rates in inhomogeneous multiple scattering atmospheres, J. Geophys. Res. 94, 16287–16301.",
        used_for: "Beam coefficient γ3 of the hemispheric-mean closure (the quadrature value, as recommended there for solar sources).",
    },
    Reference {
        key: "Zdunkowski et al. 1980",
        citation: "Zdunkowski, W. G., Welch, R. M. & Korb, G. (1980), An investigation of the structure of typical two-stream methods for the calculation of solar fluxes and heating rates in clouds, Beitr. Phys. Atmos. 53, 147–166.",
        used_for: "Practical improved flux method (PIFM) closure.",
    },
    Reference {
        key: "Coakley & Chýlek 1975",
        citation: "Coakley, J. A. & Chýlek, P. (1975), The two-stream approximation in radiative transfer: including the angle of the incident radiation, J. Atmos. Sci. 32, 409–418; adding equations as in Liou, K. N. (2002), An Introduction to Atmospheric Radiation, 2nd ed., Academic Press.",
        used_for: "Adding of layers for the direct and diffuse beams over a Lambertian surface.",
    },
    Reference {
        key: "Chylek & Wong 1995",
        citation: "Chylek, P. & Wong, J. (1995), Effect of absorbing aerosols on global radiation budget, Geophys. Res. Lett. 22, 929–931.",
        used_for: "Critical single-scattering albedo at which the TOA effect of a thin layer changes sign (a check of the solver).",
    },
    Reference {
        key: "Stamnes et al. 1988",
        citation: "Stamnes, K., Tsay, S.-C., Wiscombe, W. & Jayaweera, K. (1988), Numerically stable algorithm for discrete-ordinate-method radiative transfer in multiple scattering and emitting layered media, Appl. Opt. 27, 2502–2509 (DISORT).",
        used_for: "Multiple-scattering reference (16 streams) the two-stream fluxes are checked against.",
    },
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_method_is_cited_once() {
        let mut keys: Vec<_> = METHODS.iter().map(|r| r.key).collect();
        keys.sort_unstable();
        let n = keys.len();
        keys.dedup();
        assert_eq!(keys.len(), n, "duplicate keys");
        for r in METHODS {
            assert!(
                !r.citation.is_empty() && !r.used_for.is_empty(),
                "{}",
                r.key
            );
        }
        for key in [
            "Reda & Andreas 2004",
            "ASTM G173-03",
            "Kopp & Lean 2011",
            "Bodhaine et al. 1999",
            "Bird & Riordan 1986",
            "Joseph, Wiscombe & Weinman 1976",
            "Meador & Weaver 1980",
            "Zdunkowski et al. 1980",
            "Coakley & Chýlek 1975",
            "Taylor et al. 1996",
            "Kasten & Young 1989",
            "U.S. Standard Atmosphere 1976",
            "Chylek & Wong 1995",
            "Gauss–Legendre quadrature",
        ] {
            assert!(METHODS.iter().any(|r| r.key == key), "{key} missing");
        }
    }
}
