"""Published and derived values the tests and bundled configs check against, with sources.

Each entry: the value, its unit, where it comes from, how sure it is, and the tolerance a test
applies with the reason. How sure:

* ``published`` — read in the source named;
* ``derived`` — computed here from the stated formula and inputs with an independent tool
  (scipy/mpmath); reproducible, not a literature number;
* ``from memory`` — remembered, not re-read: tests use a wide tolerance.

Unit reminders: 1 W cm⁻¹ K⁻¹ = 100 W m⁻¹ K⁻¹; k_B/e = 86.1733 µV/K (exact 2019 SI constants);
mm²/s × g/cm³ × J/(g K) = W/(m K) with no extra factor.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Reference:
    """One outside value: what a test may compare with, and how closely."""

    value: float
    unit: str
    source: str
    how: str  # "published", "derived" or "from memory"
    tolerance: float  # relative, as tests apply it
    reason: str


R = Reference

#: name → Reference
VALUES: dict[str, Reference] = {
    # --- mathematical identities --------------------------------------------------------
    "weight_integral_x4": R(25.975757609067, "1", "∫₀^∞ x⁴eˣ/(eˣ−1)² dx = 4π⁴/15, textbook "
                            "identity", "derived", 1e-9, "closed form"),
    "weight_integral_x2": R(3.289868133696, "1", "∫₀^∞ x²eˣ/(eˣ−1)² dx = π²/3, textbook "
                            "identity", "derived", 1e-9, "closed form"),
    "debye_cv_0.1": R(0.075821, "1", "Debye heat capacity C_V/3Nk_B at T/θ = 0.1, tabulated "
                      "Debye function", "published", 1e-5, "table rounding (6 digits)"),
    "debye_cv_0.2": R(0.368635, "1", "Debye function table at T/θ = 0.2", "published", 1e-5,
                      "table rounding"),
    "debye_cv_1.0": R(0.951732, "1", "Debye function table at T/θ = 1.0", "published", 1e-5,
                      "table rounding"),
    "debye_cv_2.0": R(0.987611, "1", "Debye function table at T/θ = 2.0", "published", 1e-5,
                      "table rounding"),
    "dulong_petit_3R": R(24.943, "J/(mol K)", "3R per mole of atoms, with R = N_A k_B (exact "
                         "2019 SI)", "derived", 1e-4, "rounding of the quoted value"),
    "cp_si_298": R(19.789, "J/(mol K)", "measured molar heat capacity of Si at 298 K, "
                   "standard handbook value", "published", 1e-3, "handbook rounding"),
    "cp_ge_298": R(23.222, "J/(mol K)", "measured molar heat capacity of Ge at 298 K, "
                   "standard handbook value", "published", 1e-3, "handbook rounding"),
    "casimir_single_branch": R(2 * 3.141592653589793**2 / 15, "1", "boundary-limited Debye "
                               "conductivity at T ≪ θ: κ = (2π²/15) k_B⁴T³L/(ħ³v²); per branch "
                               "(2π²/45)(k_B⁴T³L/ħ³) Σ_i v_i⁻² (closed form of the Debye model)",
                               "derived", 1e-4, "the closed form holds for T ≪ θ"),
    # --- isotope disorder ------------------------------------------------------------------
    "gamma_si_natural": R(2.01e-4, "1", "natural Si mass variance, as quoted in the "
                          "isotope-effect literature (IUPAC abundances 92.223/4.685/3.092 %)",
                          "published", 0.02, "abundance table edition"),
    "gamma_c_natural": R(7.39e-5, "1", "natural C mass variance, derived from Γ = Σf(1−m/m̄)² "
                         "with IUPAC abundances 98.93/1.07 % (¹²C/¹³C)", "derived", 0.02,
                         "abundance table edition (kappa reads the CIAAW middle values)"),
    "gamma_sn_natural": R(3.34e-4, "1", "natural Sn mass variance, derived from IUPAC "
                          "abundances of the ten stable isotopes", "derived", 0.02,
                          "abundance table edition"),
    "gamma_te_natural": R(2.84e-4, "1", "natural Te mass variance, derived from IUPAC "
                          "abundances", "derived", 0.02, "abundance table edition"),
    "gamma_pb_natural": R(1.94e-5, "1", "natural Pb mass variance, derived from IUPAC "
                          "abundances (²⁰⁴/²⁰⁶/²⁰⁷/²⁰⁸Pb 1.4/24.1/22.1/52.4 %)", "derived", 0.03,
                          "lead's abundances vary with the source; table edition"),
    # --- alloys -------------------------------------------------------------------------------
    "kappa_sige_300K_mid": R(8.5, "W/(m K)", "lattice conductivity of Ge–Si alloys with "
                             "30-70 % Ge at 300 K, Dismukes et al., J. Appl. Phys. 35, 2899 "
                             "(1964) and Abeles et al. (1962): a broad, shallow minimum near "
                             "0.07-0.10 W/(cm K)", "from memory", 1.0,
                             "from memory; and the Callaway model with end-member parameters "
                             "is good to a factor of about two for alloys"),
    # --- Lorenz numbers ----------------------------------------------------------------------
    "lorenz_sommerfeld": R(2.443e-8, "W Ohm/K^2", "Sommerfeld value (π²/3)(k_B/e)²",
                           "derived", 1e-3, "quoted to 4 digits"),
    "lorenz_nondegenerate_acoustic": R(1.485e-8, "W Ohm/K^2", "2(k_B/e)², non-degenerate "
                                       "single parabolic band, acoustic phonons", "derived",
                                       1e-3, "quoted to 4 digits"),
    "lorenz_nondegenerate_lambda": R(2.0, "(k_B/e)^2", "non-degenerate limit (eta -> -inf) of "
                                      "the single-parabolic-band Lorenz number with "
                                      "tau ~ E^(lambda-1/2): (lambda + 2)(k_B/e)^2, since "
                                      "F_j(eta) -> Gamma(j+1) e^eta (standard; checked with "
                                      "mpmath's polylog); the value is the constant 2 + lambda "
                                      "at lambda = 0", "derived", 1e-12, "closed form"),
    "degenerate_seebeck_limit": R(100e-6, "V/K", "|S| below which carriers are degenerate "
                                  "enough for the Sommerfeld Lorenz number (at 100 uV/K the SPB "
                                  "with acoustic scattering gives L about 25 % lower)",
                                  "from memory", 0.3, "common practice, no single source"),
    "spb_eta0_S": R(204.50, "uV/K", "single parabolic band, λ = 0, η = 0: S from Fermi–Dirac "
                    "integrals (mpmath)", "derived", 1e-4, "quoted to 5 digits"),
    "spb_eta0_L": R(1.6130e-8, "W Ohm/K^2", "single parabolic band, λ = 0, η = 0: L (mpmath)",
                    "derived", 1e-4, "quoted to 5 digits"),
    "spb_eta5_S": R(55.81, "uV/K", "single parabolic band, λ = 0, η = 5: S (mpmath)",
                    "derived", 1e-3, "quoted to 4 digits"),
    "spb_eta5_L": R(2.1790e-8, "W Ohm/K^2", "single parabolic band, λ = 0, η = 5: L (mpmath)",
                    "derived", 1e-4, "quoted to 5 digits"),
    # --- measured conductivity of natural silicon --------------------------------------------
    "kappa_si_100K": R(915.0, "W/(m K)", "Glassbrenner & Slack, Phys. Rev. 134, A1058 (1964): "
                       "880–950 at 100 K", "from memory", 0.10, "from memory; spread of the "
                       "remembered range"),
    "kappa_si_200K": R(265.0, "W/(m K)", "Glassbrenner & Slack 1964: 260–270 at 200 K",
                       "from memory", 0.10, "from memory"),
    "kappa_si_300K": R(152.0, "W/(m K)", "Glassbrenner & Slack 1964 and handbook tables: "
                       "148–156 at 300 K", "published", 0.03, "spread of the published values"),
    "kappa_si_400K": R(100.0, "W/(m K)", "Glassbrenner & Slack 1964: ≈ 100 at 400 K",
                       "from memory", 0.10, "from memory"),
    "kappa_si_600K": R(62.0, "W/(m K)", "Glassbrenner & Slack 1964: ≈ 62 at 600 K",
                       "from memory", 0.10, "from memory"),
    "kappa_si_1000K": R(31.0, "W/(m K)", "Glassbrenner & Slack 1964: ≈ 31 at 1000 K",
                        "from memory", 0.10, "from memory"),
    "kappa_si_500K": R(76.0, "W/(m K)", "Glassbrenner & Slack 1964 and handbook tables: ≈ 76 at "
                       "500 K", "from memory", 0.05, "the fit target of configs/silicon.yaml"),
    "kappa_si_800K": R(42.0, "W/(m K)", "Glassbrenner & Slack 1964 and handbook tables: ≈ 42 at "
                       "800 K", "from memory", 0.05, "the fit target of configs/silicon.yaml"),
    # --- measured conductivity of natural germanium (lattice-dominated below ≈ 800 K) ---------
    "kappa_ge_100K": R(232.0, "W/(m K)", "Glassbrenner & Slack, Phys. Rev. 134, A1058 (1964), "
                       "and handbook tables: ≈ 232 at 100 K", "from memory", 0.05,
                       "the fit target of configs/germanium.yaml"),
    "kappa_ge_200K": R(96.8, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 97 at 200 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "kappa_ge_300K": R(60.2, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 60 at 300 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "kappa_ge_400K": R(43.9, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 44 at 400 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "kappa_ge_500K": R(33.8, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 34 at 500 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "kappa_ge_600K": R(27.4, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 27 at 600 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "kappa_ge_800K": R(19.8, "W/(m K)", "Glassbrenner & Slack 1964 / handbook: ≈ 20 at 800 K",
                       "from memory", 0.05, "the fit target of configs/germanium.yaml"),
    "si28_gain_300K": R(0.10, "1", "isotopically enriched ²⁸Si (99.98 %): κ +10 ± 2 % at "
                        "300 K, Inyushkin et al., phys. stat. sol. (c) 1, 2995 (2004)",
                        "published", 0.2, "the stated ±2 % of +10 %"),
    # --- elastic data → Debye quantities (silicon) --------------------------------------------
    "si_density": R(2329.0, "kg/m^3", "density of silicon, handbook", "published", 1e-3,
                    "handbook rounding"),
    "si_lattice_constant": R(5.431e-10, "m", "lattice constant of silicon, handbook",
                             "published", 1e-4, "handbook rounding"),
    "si_vl_hill": R(8950.0, "m/s", "longitudinal velocity from the Voigt–Reuss–Hill average of "
                    "C11/C12/C44 = 165.7/63.9/79.6 GPa (from memory) and ρ = 2.329 g/cm³",
                    "derived", 2e-3, "rounded to 4 digits"),
    "si_vt_hill": R(5345.0, "m/s", "transverse velocity, same average", "derived", 2e-3,
                    "rounded to 4 digits"),
    "si_vm_hill": R(5915.0, "m/s", "Debye mean [(1/v_L³ + 2/v_T³)/3]^(−1/3) of the two "
                    "velocities above", "derived", 5e-4, "rounded to 4 digits"),
    "si_theta_hill": R(648.6, "K", "θ_D = (ħ/k_B)(6π²n)^(1/3) v_m, Anderson, J. Phys. Chem. "
                       "Solids 24, 909 (1963), with the inputs above", "derived", 1e-3,
                       "rounded to 4 digits"),
    "si_poisson_hill": R(0.2228, "1", "ν = (1−2r²)/(2−2r²), r = v_T/v_L, with the velocities "
                         "above", "derived", 2e-3, "rounded to 4 digits"),
    "si_gruneisen_from_poisson": R(1.377, "1", "γ = 3(1+ν)/(2(2−3ν)), Belomestnykh & Tesleva, "
                                   "Tech. Phys. 49, 1098 (2004), with ν above", "derived", 2e-3,
                                   "rounded to 4 digits"),
    # --- limits -----------------------------------------------------------------------------
    "cahill_si_300K": R(1.148, "W/(m K)", "Cahill–Watson–Pohl minimum, Phys. Rev. B 46, 6131 "
                        "(1992), silicon with the Hill velocities at 300 K", "derived", 2e-3,
                        "rounded to 4 digits"),
    "cahill_si_high_T": R(1.48, "W/(m K)", "Cahill–Watson–Pohl high-temperature limit "
                          "(π/6)^(1/3) k_B n^(2/3)(v_L+2v_T)/2, silicon", "derived", 5e-3,
                          "rounded to 3 digits"),
    "clarke_si": R(1.36, "W/(m K)", "Clarke minimum 0.87 k_B Ω_a^(−2/3)(E/ρ)^(1/2), silicon with "
                   "E = 162.7 GPa", "derived", 1e-2, "rounded to 3 digits"),
    "slack_A_gamma_1": R(3.403e-6, "W/(m K) per (u K³ Å)", "Julian's A(γ) = 2.43e-6/(1 − "
                         "0.514/γ + 0.228/γ²) at γ = 1, κ in W/(m K), M̄ in u, δ in Å, θ in K "
                         "(the same constant is printed 2.43e-8 for W/(cm K))", "derived", 1e-3,
                         "rounded to 4 digits"),
    "slack_si_morelli": R(156.0, "W/(m K)", "measured κ of Si at 300 K (Glassbrenner & "
                          "Slack 1964) against Slack's estimate with the acoustic θ_a = 395 K "
                          "and γ = 0.56 listed for Si by Morelli & Slack, High Thermal "
                          "Conductivity Materials (Springer, 2006), Table 1.x", "from memory",
                          0.3, "from memory; Slack's formula is good to about 20-30 %"),
    "klemens_alloy_worked": R(20.29, "W/(m K)", "Klemens/Callaway–von Baeyer κ_alloy = κ_pure "
                              "arctan(u)/u, u² = π²θΩΓκ_pure/(h v²); θ = 600 K, Ω = 2e-29 m³, "
                              "v = 6000 m/s, κ_pure = 100 W/(m K), Γ = 0.1", "derived", 1e-3,
                              "rounded to 4 digits"),
    # --- measurement practice (defaults) --------------------------------------------------------
    "roundrobin_kappa": R(0.11, "1", "Alleno et al., Rev. Sci. Instrum. 86, 011301 (2015): "
                          "average κ uncertainty of interlaboratory round robins, 300–700 K",
                          "published", 0.0, "used as a default, not compared"),
    "roundrobin_sigma": R(0.08, "1", "Alleno et al. 2015: resistivity", "published", 0.0,
                          "used as a default"),
    "roundrobin_seebeck": R(0.06, "1", "Alleno et al. 2015: Seebeck coefficient", "published",
                            0.0, "used as a default"),
    "repeatability_kappa": R(0.02, "1", "point-to-point repeatability of laser-flash "
                             "diffusivity within one run", "from memory", 0.0,
                             "common practice, no single source; used as a default"),
    "repeatability_sigma": R(0.01, "1", "point-to-point repeatability of four-probe "
                             "resistivity within one run", "from memory", 0.0,
                             "common practice, no single source; used as a default"),
    "repeatability_seebeck": R(0.01, "1", "point-to-point repeatability of the Seebeck "
                               "coefficient within one run", "from memory", 0.0,
                               "common practice, no single source; used as a default"),
    # --- statistics -------------------------------------------------------------------------
    "gaussian_68": R(0.682689492137, "1", "probability content of +-1 standard deviation of a "
                     "Gaussian, erf(1/sqrt(2)) (scipy.special)", "derived", 1e-12,
                     "closed form"),
}


def value(name: str) -> float:
    """The value of entry ``name``."""
    return VALUES[name].value
