"""Quasi-harmonic thermodynamics (modeheat.quasiharmonic) against references built in this file.

References, named beside each check:
- the published equation-of-state forms, written out here independently of the code
  (third-order Birch–Murnaghan, Birch 1947; Vinet, Vinet et al. 1987 — from memory),
  checked themselves against mpmath differentiation (P = −dE/dV, B = −V dP/dV);
- the vibrational free energy of a Debye spectrum by scipy quadrature of the textbook
  integral F = 9NkT (T/θ)³ ∫₀^{θ/T} x² ln(1 − e^−x) dx + 9Nkθ/8 (common practice),
  independent of modeheat's engine;
- thermodynamic identities (common practice): C_p − C_v = α² B_T V T, S = −∂G/∂T,
  G(T, P) = min_V [F(V, T) + PV], and Grüneisen's rule: a solid whose every frequency
  scales as V^−γ has γ_th = γ.
"""

from __future__ import annotations

import warnings

import mpmath
import numpy as np
import pandas as pd
import pytest
from scipy import constants, integrate

import modeheat as mh
from modeheat.quasiharmonic import (QuasiHarmonic, QuasiHarmonicWarning, VolumeSet, birch_murnaghan_energy, fit_eos,
                                    moment_gruneisen, quasi_harmonic, vinet_energy)

K_PER_THZ = constants.h * 1e12 / constants.k  # reference: scipy.constants
EV_PER_A3_IN_GPA = constants.e / 1e-30 / 1e9  # 1 eV/Å³ in GPa
J_PER_MOL_PER_EV = constants.e * constants.N_A
M3_PER_MOL_PER_A3 = 1e-30 * constants.N_A
ATOMS = 2
VOLUMES = np.array([38.0, 39.0, 40.0, 41.0, 42.0, 43.0])  # Å³ per formula unit


# --- references written out here -------------------------------------------------------------

def bm3(V, E0, V0, B0, Bp):
    """Third-order Birch–Murnaghan energy (Birch 1947; published form, from memory)."""
    f = (V0 / V) ** (2.0 / 3.0)
    return E0 + 9.0 * V0 * B0 / 16.0 * ((f - 1.0) ** 3 * Bp + (f - 1.0) ** 2 * (6.0 - 4.0 * f))


def vinet(V, E0, V0, B0, Bp):
    """Vinet energy (Vinet, Ferrante, Smith & Rose 1987; published form, from memory)."""
    x = (V / V0) ** (1.0 / 3.0)
    eta = 1.5 * (Bp - 1.0)
    return E0 + 2.0 * B0 * V0 / (Bp - 1.0) ** 2 * (2.0 - (5.0 + 3.0 * Bp * (x - 1.0) - 3.0 * x) * mpmath.exp(-eta * (x - 1.0)))


def debye_spectrum(theta: float, bins: int = 4000) -> mh.Spectrum:
    """A Debye DOS g ∝ ν² up to θ, 3·ATOMS modes, sampled on `bins` points (exact in g/ν²)."""
    top = theta / K_PER_THZ
    nu = np.linspace(0.0, top, bins)
    return mh.Spectrum(nu, 9.0 * ATOMS * nu**2 / top**3, unit="THz", atoms=ATOMS)


def debye_free_energy(theta: float, T: float) -> float:
    """F_vib in J/mol of 3·ATOMS Debye modes (scipy quadrature of the textbook integral)."""
    R = constants.R
    zero = 9.0 * ATOMS * R * theta / 8.0
    if T == 0:
        return zero
    y = theta / T
    integral = integrate.quad(lambda x: x * x * np.log1p(-np.exp(-x)), 0.0, y, epsabs=0, epsrel=1e-13, limit=200)[0]
    return zero + 9.0 * ATOMS * R * T / y**3 * integral


def family(gamma: float = 2.0, theta0: float = 300.0, B0=0.6, Bp=4.5, volumes=VOLUMES, bins=4000):
    """θ ∝ V^−γ Debye spectra with a Birch–Murnaghan static energy (E₀ −10 eV, V₀ 40 Å³, B₀ in eV/Å³)."""
    thetas = theta0 * (volumes / 40.0) ** -gamma
    energies = np.array([bm3(v, -10.0, 40.0, B0, Bp) for v in volumes])
    return VolumeSet(volumes, energies, [debye_spectrum(t, bins) for t in thetas]), thetas, energies


# --- equations of state ---------------------------------------------------------------------

def test_the_reference_forms_obey_their_own_definitions():
    # reference: mpmath differentiation — P(V0) = 0 and −V dP/dV at V0 = B0 for both forms
    for form in (bm3, vinet):
        with mpmath.workdps(30):  # local precision: other test modules set their own
            E = lambda v: form(mpmath.mpf(v), 0, 40, mpmath.mpf("0.6"), mpmath.mpf("4.5"))  # noqa: E731
            assert abs(mpmath.diff(E, 40)) < 1e-20
            assert float(40 * mpmath.diff(E, 40, 2)) == pytest.approx(0.6, rel=1e-20)
            # B′ = dB/dP at V0 = −(V/B) dB/dV with B = V E''
            B = lambda v: v * mpmath.diff(E, v, 2)  # noqa: E731
            assert float(-40 / B(40) * mpmath.diff(B, 40)) == pytest.approx(4.5, rel=1e-12)


@pytest.mark.parametrize("form, reference", [("birch-murnaghan", bm3), ("vinet", vinet)])
def test_eos_fits_give_back_synthetic_published_forms(form, reference):
    true = dict(E0=-7.25, V0=40.0, B0=0.55, Bp=4.8)
    V = np.linspace(36.0, 45.0, 7)
    E = np.array([float(reference(v, **true)) for v in V])
    got = fit_eos(V, E, form)
    # reference: the published form written above, fitted back (eV, Å³, GPa)
    assert got["E0"] == pytest.approx(true["E0"], abs=1e-9)
    assert got["V0"] == pytest.approx(true["V0"], rel=1e-9)
    assert got["B0"] == pytest.approx(true["B0"] * EV_PER_A3_IN_GPA, rel=1e-7)
    assert got["B0_prime"] == pytest.approx(true["Bp"], rel=1e-6)
    assert got["rms"] < 1e-9
    # modeheat's own forms agree with the ones written here
    mine = birch_murnaghan_energy if form == "birch-murnaghan" else vinet_energy
    np.testing.assert_allclose(mine(V, true["E0"], true["V0"], true["B0"], true["Bp"]), E, rtol=1e-13)


# --- the quasi-harmonic table ------------------------------------------------------------------

def test_cp_minus_cv_equals_alpha_squared_b_v_t_from_independent_finite_differences():
    vs, thetas, energies = family()
    T = np.array([50.0, 150.0, 300.0, 600.0])
    table = quasi_harmonic(vs, T)
    V = VOLUMES * M3_PER_MOL_PER_A3
    x = (V / V[2]) ** (-2.0 / 3.0)

    def equilibrium(t):
        """V, B at temperature t from F(V_i, t) built here (quadrature), cubic in y = (V/V_3)^(−2/3):
        dF/dV = 0 where dF/dy = 0, and there B = V d²F/dV² = V F_yy (dy/dV)²."""
        F = energies * J_PER_MOL_PER_EV + np.array([debye_free_energy(th, t) for th in thetas])
        c = np.polyfit(x, F, 3)
        roots = np.roots(np.polyder(c))
        y = min((r.real for r in roots if abs(r.imag) < 1e-12 and np.polyval(np.polyder(c, 2), r.real) > 0),
                key=lambda r: abs(r - 1.0))
        v_eq = V[2] * y ** -1.5
        return v_eq, v_eq * np.polyval(np.polyder(c, 2), y) * (2.0 * y / (3.0 * v_eq)) ** 2

    for t, row in zip(T, table.itertuples()):
        h = 1e-3 * t
        (v_minus, _), (v0, b0), (v_plus, _) = (equilibrium(t - h), equilibrium(t), equilibrium(t + h))
        alpha = (v_plus - v_minus) / (2 * h) / v0
        # references: finite differences of F(V, T) from quadrature (independent of modeheat)
        assert row.V * M3_PER_MOL_PER_A3 == pytest.approx(v0, rel=1e-7)
        assert row.B_T * 1e9 == pytest.approx(b0, rel=1e-4)
        assert row.alpha_V == pytest.approx(alpha, rel=1e-4)
        assert row.Cp - row.Cv == pytest.approx(alpha**2 * b0 * v0 * t, rel=3e-4)


@pytest.mark.parametrize("eos", ["birch-murnaghan", "vinet"])
def test_entropy_is_minus_dg_dt_and_g_is_the_minimum_over_v(eos):
    vs, thetas, energies = family()
    T = np.array([80.0, 200.0, 400.0])
    h = 1e-3
    for P in (0.0, 3.0):
        table = quasi_harmonic(vs, np.concatenate([T - h, T, T + h]), pressure=P, eos=eos)
        G = table["G"].to_numpy().reshape(3, -1)
        S = table["S"].to_numpy().reshape(3, -1)[1]
        # reference: S = −∂G/∂T (common practice), central differences
        np.testing.assert_allclose(-(G[2] - G[0]) / (2 * h), S, rtol=1e-5)
        # reference: G = min over V of F + PV, with F at the sampled volumes from quadrature;
        # the fitted curve's minimum lies at or below every sampled F + PV
        for t, g in zip(T, G[1]):
            sampled = energies * J_PER_MOL_PER_EV + np.array([debye_free_energy(th, t) for th in thetas]) \
                + P * 1e9 * VOLUMES * M3_PER_MOL_PER_A3
            assert g <= sampled.min() + 1e-6 * abs(sampled.min())
            assert g >= sampled.min() - 0.05 * np.ptp(sampled)  # and near them


def test_cp_minus_cv_identity_holds_for_each_eos_and_they_agree_on_smooth_data():
    vs, _, _ = family()
    T = np.linspace(10.0, 500.0, 50)
    bm = quasi_harmonic(vs, T, eos="birch-murnaghan")
    vi = quasi_harmonic(vs, T, eos="vinet")
    for table in (bm, vi):
        # reference: C_p − C_v = α² B_T V T (common practice)
        identity = table.alpha_V**2 * table.B_T * 1e9 * table.V * M3_PER_MOL_PER_A3 * table["T"]
        np.testing.assert_allclose(table.Cp - table.Cv, identity, rtol=1e-10)
    np.testing.assert_allclose(vi.V, bm.V, rtol=1e-4)
    np.testing.assert_allclose(vi.Cp, bm.Cp, rtol=1e-3)
    assert bm.attrs["eos"] == "birch-murnaghan" and vi.attrs["eos"] == "vinet"


def test_auto_keeps_the_form_that_fits_better_and_reports_both():
    vs, thetas, _ = family()
    vin = VolumeSet(VOLUMES, [float(vinet(v, -10.0, 40.0, 0.6, 7.0)) for v in VOLUMES], vs.spectra)
    for volume_set, best in ((vs, "birch-murnaghan"), (vin, "vinet")):
        table = quasi_harmonic(volume_set, [10.0, 100.0])
        rms = table.attrs["eos_rms"]
        assert set(rms) == {"birch-murnaghan", "vinet"}
        assert table.attrs["eos"] == best == min(rms, key=rms.get)


def test_constant_gruneisen_family_gives_gamma_back():
    for gamma in (0.8, 2.0, 3.1):
        vs, _, _ = family(gamma)
        # reference: Grüneisen's rule — every θ(n) ∝ V^−γ (common practice)
        g = moment_gruneisen(vs)
        for n in (-3, -2, -1, 0, 1, 2):
            np.testing.assert_allclose(g[f"gamma({n})"], gamma, rtol=1e-6)
        # the thermodynamic γ at high T
        table = quasi_harmonic(vs, [300.0, 900.0])
        np.testing.assert_allclose(table["gamma"], gamma, rtol=2e-4)
        # at low T as well, to the accuracy of the cubic in V^(−2/3) that carries S(V) ∝ V^(3γ)
        # across the ±7 % of sampled volumes (documented limit)
        np.testing.assert_allclose(quasi_harmonic(vs, [10.0, 30.0])["gamma"], gamma, rtol=2e-3)


def test_zero_temperature_row_and_units():
    vs, thetas, energies = family()
    table = quasi_harmonic(vs, [0.0, 1.0])
    assert table.loc[0, "Cp"] == 0 and table.loc[0, "S"] == 0 and table.loc[0, "alpha_V"] == 0
    # at T = 0, the limit of γ_th: γ(−3) of the ω² bottom (here every θ ∝ V^−2, so 2)
    assert table.loc[0, "gamma"] == pytest.approx(2.0, rel=1e-6)
    assert table.attrs["units"]["B_T"] == "GPa" and table.attrs["atoms"] == ATOMS
    assert "verify" in table.attrs["caution"].lower()
    # G(0) = min over V of E₀ + zero point (reference: the fitted static + 9Rθ/8 per atom, quadrature free)
    zp = 9.0 * ATOMS * constants.R * thetas / 8.0
    assert table.loc[0, "G"] <= (energies * J_PER_MOL_PER_EV + zp).min()


def test_leaving_the_sampled_volumes_is_warned_with_the_temperature():
    vs, _, _ = family(gamma=3.0, theta0=300.0, B0=0.2)  # soft: expands past 43 Å³ from ~350 K
    with pytest.warns(QuasiHarmonicWarning, match=r"from T = [0-9.]+ K the equilibrium volume lies above"):
        table = quasi_harmonic(vs, np.linspace(0.0, 1500.0, 31))
    first = table.attrs["extrapolated_from"]
    assert first is not None and table.loc[table["T"] >= first, "extrapolated"].all()
    assert not table.loc[table["T"] < first, "extrapolated"].any()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        quasi_harmonic(vs, np.linspace(0.0, 1500.0, 31), warn=False)


# --- bad input -------------------------------------------------------------------------------

def test_bad_volume_sets_are_refused_with_clear_words():
    sp = [debye_spectrum(300.0) for _ in range(6)]
    E = np.zeros(6)
    with pytest.raises(mh.InputError, match="at least 4 volumes"):
        VolumeSet(VOLUMES[:3], E[:3], sp[:3])
    with pytest.raises(mh.InputError, match=r"volume 3 \(39 A3\) is below volume 2"):
        VolumeSet([38.0, 40.0, 39.0, 41.0, 42.0, 43.0], E, sp)
    with pytest.raises(mh.InputError, match="volume 3 .* repeats volume 2"):
        VolumeSet([38.0, 39.0, 39.0, 41.0, 42.0, 43.0], E, sp)
    with pytest.raises(mh.InputError, match="6 volumes but 5 spectra"):
        VolumeSet(VOLUMES, E, sp[:5])
    other = mh.Spectrum(sp[0].frequency, sp[0].density * 1.5, unit="THz", atoms=3)
    with pytest.raises(mh.InputError, match="different atoms per formula unit.*spectrum 4"):
        VolumeSet(VOLUMES, E, sp[:3] + [other] + sp[4:])
    with pytest.raises(mh.InputError, match="energy 2 is not a finite number"):
        VolumeSet(VOLUMES, [0.0, np.nan, 0, 0, 0, 0], sp)
    with pytest.raises(mh.InputError, match="volume unit"):
        VolumeSet(VOLUMES, E, sp, volume_unit="litre")
    with pytest.raises(mh.InputError, match="no spectra"):
        quasi_harmonic(VolumeSet(VOLUMES, E), [1.0])
    vs, _, _ = family()
    with pytest.raises(mh.InputError, match="eos"):
        quasi_harmonic(vs, [1.0], eos="cubic")
    with pytest.raises(mh.InputError):
        quasi_harmonic(vs, [-5.0])


# --- as a model term --------------------------------------------------------------------------

def test_a_fit_to_quasi_harmonic_cp_recovers_the_frequency_scale():
    vs, _, _ = family()
    T = np.linspace(5.0, 400.0, 40)
    truth = quasi_harmonic(vs, T, scale=1.04)
    data = pd.DataFrame({"T": T, "C": truth["Cp"].to_numpy()})
    data.attrs["atoms"] = ATOMS
    result = mh.fit(QuasiHarmonic(vs), data, vary=["qh.scale"])
    assert result.model["qh"].scale == pytest.approx(1.04, rel=1e-7)


def test_in_a_mixture_the_term_gives_cp_and_counts_three_modes_per_atom():
    vs, _, _ = family()
    term = QuasiHarmonic(vs, pressure=1.0)
    model = term + mh.Electronic(2e-3)
    T = np.array([2.0, 50.0, 300.0])
    q = quasi_harmonic(vs, T, pressure=1.0)
    np.testing.assert_allclose(mh.heat_capacity(model, T), q["Cp"] + 2e-3 * T, rtol=1e-12)
    np.testing.assert_allclose(mh.entropy(model, T), q["S"] + 2e-3 * T, rtol=1e-10)
    assert model.modes == 3 * ATOMS
    assert mh.Mixture(model.components, atoms=ATOMS).atoms == ATOMS  # the atom check passes
    assert term.parameters == {"scale": 1.0}
    with pytest.raises(mh.InputError, match="already gives C_p .* twice"):
        term + mh.Dilatation(1e-6)


def test_no_minimum_leaves_rows_out_with_a_warning_and_the_term_refuses_them():
    vs, _, _ = family(gamma=3.0, B0=0.1)  # soft and anharmonic: F + PV loses its minimum near 900 K
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        table = quasi_harmonic(vs, np.linspace(0.0, 1500.0, 31))
    words = [str(w.message) for w in caught if issubclass(w.category, QuasiHarmonicWarning)]
    assert any("no minimum of F + PV" in w and "rows from" in w for w in words)
    assert 0 < len(table) < 31 and np.all(np.isfinite(table[["V", "B_T", "Cp"]].to_numpy()))
    with pytest.raises(mh.InputError, match="no minimum of F \\+ PV from T = "):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            mh.heat_capacity(QuasiHarmonic(vs), np.linspace(1.0, 1500.0, 31))


def test_the_fit_report_says_the_term_gives_cp():
    vs, _, _ = family()
    T = np.linspace(20.0, 300.0, 30)
    data = pd.DataFrame({"T": T, "C": quasi_harmonic(vs, T)["Cp"].to_numpy() + 1e-3 * T})
    data.attrs["atoms"] = ATOMS
    report = mh.fit(QuasiHarmonic(vs) + mh.Electronic(5e-4), data, vary=["qh.scale", "electronic.gamma"]).report()
    assert "qh gives C_p itself" in report
    assert "compared as C_v" not in report and "absorbs C_p − C_v" not in report
