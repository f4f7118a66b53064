"""Names, symbols and units of every reported quantity, for tables and figures.

Each entry gives a plain-text label and unit (Markdown, logs) and their
LaTeX forms, written to read the same in LaTeX (table.tex) and in
matplotlib's mathtext (figure labels): math only inside ``$...$``.
"""

import dataclasses


@dataclasses.dataclass(frozen=True)
class Quantity:
    """How one quantity is named and which unit it carries."""

    label: str
    symbol_tex: str
    unit_text: str = ""
    unit_tex: str = ""
    symbol_text: str = ""  # plain-text symbol where the label alone is ambiguous (Markdown)

    def axis_label(self):
        """Figure axis label: symbol and unit in brackets (mathtext)."""
        return f"{self.symbol_tex} [{self.unit_tex}]" if self.unit_tex else self.symbol_tex


_MS = ("m/s", r"m$\,$s$^{-1}$")

STAR = {
    "mass_msun": Quantity("Stellar mass", r"$M_\star$", "M_sun", r"$M_\odot$"),
    "radius_rsun": Quantity("Stellar radius", r"$R_\star$", "R_sun", r"$R_\odot$"),
    "density_gcc": Quantity("Stellar density", r"$\rho_\star$", "g/cm^3", r"g$\,$cm$^{-3}$"),
    "teff_k": Quantity("Effective temperature", r"$T_\mathrm{eff}$", "K", "K"),
    "age_gyr": Quantity("Age", r"$\tau_\star$", "Gyr", "Gyr"),
}

PLANET = {
    "period_days": Quantity("Orbital period", r"$P$", "d", "d"),
    "transit_bjd": Quantity("Mid-transit time", r"$T_0$", "BJD_TDB", r"BJD$_\mathrm{TDB}$"),
    "radius_ratio": Quantity("Radius ratio", r"$R_p/R_\star$"),
    "impact": Quantity("Impact parameter", r"$b$"),
    "rv_amplitude_ms": Quantity("RV semi-amplitude", r"$K$", *_MS),
    "sqrt_e_cos_w": Quantity("Eccentricity vector", r"$\sqrt{e}\cos\omega$", symbol_text="sqrt(e) cos(w)"),
    "sqrt_e_sin_w": Quantity("Eccentricity vector", r"$\sqrt{e}\sin\omega$", symbol_text="sqrt(e) sin(w)"),
    "inclination_deg": Quantity("Inclination", r"$i$", "deg", "deg"),
    "a_over_rstar": Quantity("Scaled semi-major axis", r"$a/R_\star$"),
    "semi_major_axis_au": Quantity("Semi-major axis", r"$a$", "au", "au"),
    "eccentricity": Quantity("Eccentricity", r"$e$"),
    "omega_deg": Quantity("Argument of periastron", r"$\omega$", "deg", "deg"),
    "mass_earth": Quantity("Mass", r"$M_p$", "M_earth", r"$M_\oplus$"),
    "mass_jup": Quantity("Mass", r"$M_p$", "M_jup", r"$M_\mathrm{J}$"),
    "radius_earth": Quantity("Radius", r"$R_p$", "R_earth", r"$R_\oplus$"),
    "radius_jup": Quantity("Radius", r"$R_p$", "R_jup", r"$R_\mathrm{J}$"),
    "density_gcc": Quantity("Bulk density", r"$\rho_p$", "g/cm^3", r"g$\,$cm$^{-3}$"),
    "surface_gravity_ms2": Quantity("Surface gravity", r"$g_p$", "m/s^2", r"m$\,$s$^{-2}$"),
    "transit_duration_hr": Quantity("Transit duration", r"$T_{14}$", "h", "h"),
    "equilibrium_temp_k": Quantity("Equilibrium temperature", r"$T_\mathrm{eq}$", "K", "K"),
    "insolation_earth": Quantity("Insolation", r"$S$", "S_earth", r"$S_\oplus$"),
}

#: Minimum masses of planets seen only in radial velocities.
MINIMUM_MASS = {
    "mass_earth": Quantity("Minimum mass", r"$M_p\sin i$", "M_earth", r"$M_\oplus$"),
    "mass_jup": Quantity("Minimum mass", r"$M_p\sin i$", "M_jup", r"$M_\mathrm{J}$"),
}
#: A coordinate of a planet's individual transit times (their offsets from the linear ephemeris, in an
#: orthonormal basis of offsets with no linear trend).
TRANSIT_TIME_MODE = Quantity("Transit-time offset coordinate", r"$\delta t$", "d", "d")
#: Conjunction time of planets that do not transit.
CONJUNCTION = Quantity("Time of conjunction", r"$T_\mathrm{c}$", "BJD_TDB", r"BJD$_\mathrm{TDB}$")

DATASET = {
    "limb_darkening_q1": Quantity("Limb darkening", r"$q_1$", symbol_text="q1"),
    "limb_darkening_q2": Quantity("Limb darkening", r"$q_2$", symbol_text="q2"),
    "flux_level": Quantity("Flux level", r"$F_0$"),
    "jitter_ppm": Quantity("Jitter", r"$\sigma_\mathrm{jit}$", "ppm", "ppm"),
    "offset_ms": Quantity("RV offset", r"$\gamma$", *_MS),
    "jitter_ms": Quantity("RV jitter", r"$\sigma_\mathrm{jit}$", *_MS),
    "slope_per_day": Quantity("Flux slope", r"$\dot F$", "1/d", r"d$^{-1}$"),
    "dilution": Quantity("Dilution", r"$D$"),
    "gp_sigma_ppm": Quantity("GP amplitude", r"$\sigma_\mathrm{GP}$", "ppm", "ppm"),
    "gp_rho_days": Quantity("GP timescale", r"$\rho_\mathrm{GP}$", "d", "d"),
    "gp_quality": Quantity("GP quality factor", r"$Q$"),
    "gp_period_days": Quantity("GP rotation period", r"$P_\mathrm{GP}$", "d", "d"),
    "gp_quality_difference": Quantity("GP quality difference", r"$\Delta Q$"),
    "gp_mix": Quantity("GP harmonic fraction", r"$f_\mathrm{GP}$"),
    "activity_coefficient": Quantity("Activity coefficient", r"$c$", "m/s per unit", r"m\,s$^{-1}$ per unit"),
    "activity_amplitude_ms": Quantity("Activity amplitude", r"$A_\mathrm{act}$", *_MS),
    "slope_ms_per_day": Quantity("RV trend slope", r"$\dot\gamma$", "m/s/d", r"m\,s$^{-1}$\,d$^{-1}$"),
    "curvature_ms_per_day2": Quantity("RV trend curvature", r"$\ddot\gamma$", "m/s/d^2", r"m\,s$^{-1}$\,d$^{-2}$"),
    "rotation_period_days": Quantity("Rotation period", r"$P_\mathrm{rot}$", "d", "d"),
    "quality": Quantity("Activity quality factor", r"$Q_0$"),
    "quality_difference": Quantity("Activity quality difference", r"$\Delta Q$"),
    "mix": Quantity("Activity harmonic fraction", r"$f$"),
}


#: The planet's own light in one band (fitted), and what follows from it (derived).
LIGHT = {
    "eclipse_depth_ppm": Quantity("Eclipse depth", r"$\delta_\mathrm{ecl}$", "ppm", "ppm"),
    "nightside_ppm": Quantity("Nightside flux", r"$F_\mathrm{night}/F_\star$", "ppm", "ppm"),
    "hotspot_offset_deg": Quantity("Hotspot offset", r"$\Delta\phi$", "deg", "deg"),
    "ellipsoidal_ppm": Quantity("Ellipsoidal amplitude", r"$A_\mathrm{ell}$", "ppm", "ppm"),
    "beaming_ppm": Quantity("Beaming amplitude", r"$A_\mathrm{beam}$", "ppm", "ppm"),
    "dayside_brightness_temp_k": Quantity("Dayside brightness temperature", r"$T_\mathrm{day}$", "K", "K"),
    "nightside_brightness_temp_k": Quantity("Nightside brightness temperature", r"$T_\mathrm{night}$", "K", "K"),
    "geometric_albedo_max": Quantity("Geometric albedo bound", r"$A_g^\mathrm{max}$"),
    "e_cos_w": Quantity("Eccentricity vector", r"$e\cos\omega$", symbol_text="e cos(w)"),
    "e_sin_w": Quantity("Eccentricity vector", r"$e\sin\omega$", symbol_text="e sin(w)"),
    "eclipse_bjd": Quantity("Mid-eclipse time", r"$T_\mathrm{ecl}$", "BJD_TDB", r"BJD$_\mathrm{TDB}$"),
    "bond_albedo": Quantity("Bond albedo", r"$A_B$"),
    "heat_redistribution": Quantity("Heat redistribution", r"$\varepsilon$"),
}


def regressor_quantity(column):
    """The :class:`Quantity` of a baseline's coefficient of regressor ``column`` (per standard deviation of it)."""
    tex = str(column).replace("_", r"\_")
    return Quantity(f"Regressor coefficient ({column})", rf"$c_\mathrm{{{tex}}}$", "per s.d.", "per s.d.")


def time_power_quantity(power):
    """The :class:`Quantity` of a baseline's coefficient of (t - t_mid)^power."""
    return Quantity(f"Time polynomial coefficient ({power})", rf"$p_{power}$", f"1/d^{power}", rf"d$^{{-{power}}}$")


def band_quantity(key, band):
    """The :class:`Quantity` of a planet-light key, its label naming the band."""
    q = LIGHT[key]
    return dataclasses.replace(q, label=f"{q.label} ({band})")


def planet_quantity(key, transits):
    """The :class:`Quantity` of a planet key, minding non-transiting planets."""
    if not transits and key in MINIMUM_MASS:
        return MINIMUM_MASS[key]
    if not transits and key == "transit_bjd":
        return CONJUNCTION
    return PLANET[key]
