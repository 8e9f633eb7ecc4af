"""Where the sun is, and how strong it is above the atmosphere.

Thin wrappers over pvlib so every model in siteharvest uses one solar geometry, with one set of
defaults, in one vocabulary (degrees, W/m2, local standard time).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

# pvlib is imported in each function: with the scipy modules it pulls in, its import takes about half a
# second, which a spot that needs no solar geometry does not pay.

#: Solar constant used for extraterrestrial irradiance [W/m2] (Gueymard 2004; pvlib's default).
SOLAR_CONSTANT_W_M2 = 1366.1


def sun_position(
    times: pd.DatetimeIndex,
    latitude_deg: float,
    longitude_deg: float,
    altitude_m: float = 0.0,
    pressure_pa: float | np.ndarray | None = None,
    temp_air_c: float | np.ndarray = 12.0,
    delta_t_s: float | None = None,
) -> pd.DataFrame:
    """Topocentric position of the sun's centre at each of ``times``.

    Method
    ------
    The NREL Solar Position Algorithm (SPA) as implemented in pvlib (``nrel_numpy``): heliocentric
    position of the earth from the VSOP87 periodic terms, nutation, aberration, conversion to
    topocentric coordinates for the observer's latitude, longitude and altitude, and atmospheric
    refraction from the local pressure and air temperature.

    Parameters
    ----------
    times : pandas.DatetimeIndex
        Time-zone-aware instants at which to place the sun.
    latitude_deg : float
        Observer latitude [deg], north positive.
    longitude_deg : float
        Observer longitude [deg], east positive.
    altitude_m : float, default 0
        Observer altitude above sea level [m].
    pressure_pa : float or array of shape (len(times),), optional
        Local air pressure [Pa], used for refraction. Defaults to the standard-atmosphere pressure
        at ``altitude_m`` (``pvlib.atmosphere.alt2pres``).
    temp_air_c : float or array of shape (len(times),), default 12
        Local air temperature [degC], used for refraction.
    delta_t_s : float, optional
        Difference between terrestrial time and UT1 [s]. Defaults to pvlib's estimate for the
        year of each instant.

    Returns
    -------
    pandas.DataFrame
        Indexed by ``times``; columns ``apparent_zenith``, ``zenith``, ``apparent_elevation``,
        ``elevation``, ``azimuth`` [deg] (azimuth from north, clockwise: 90 = east, 180 = south)
        and ``equation_of_time`` [min]. ``apparent_*`` include refraction.

    Notes
    -----
    Validity: years -2000 to 6000; stated uncertainty +/- 0.0003 deg (Reda & Andreas 2004).

    References
    ----------
    Reda, I. and Andreas, A. (2004). Solar position algorithm for solar radiation applications.
    Solar Energy 76(5), 577-589. doi:10.1016/j.solener.2003.12.003 (NREL/TP-560-34302, rev. 2008).
    """
    import pvlib

    if pressure_pa is None:
        pressure_pa = pvlib.atmosphere.alt2pres(altitude_m)
    kwargs = {} if delta_t_s is None else {"delta_t": float(delta_t_s)}
    pos = pvlib.solarposition.get_solarposition(
        times, latitude_deg, longitude_deg, altitude=altitude_m, pressure=pressure_pa,
        method="nrel_numpy", temperature=temp_air_c, **kwargs,
    )
    pos.index = times
    return pos


def extraterrestrial_normal_w_m2(
    times: pd.DatetimeIndex,
    solar_constant_w_m2: float = SOLAR_CONSTANT_W_M2,
    method: str = "spencer",
) -> pd.Series:
    """Solar irradiance on a plane normal to the sun's rays at the top of the atmosphere.

    Method
    ------
    The solar constant scaled by the inverse square of the earth-sun distance, here by the Fourier
    series of Spencer (1971) in the day angle (pvlib ``get_extra_radiation``, default method).
    ``method`` may also be ``"asce"``, ``"nrel"`` (SPA distance) or ``"pyephem"``.

    Parameters
    ----------
    times : pandas.DatetimeIndex
        Instants (only the day of year matters).
    solar_constant_w_m2 : float, default 1366.1
        Mean extraterrestrial irradiance at one astronomical unit [W/m2].
    method : str, default "spencer"
        Earth-sun distance model passed to pvlib.

    Returns
    -------
    pandas.Series
        Extraterrestrial normal irradiance [W/m2], indexed by ``times``; between about
        0.967 and 1.035 times ``solar_constant_w_m2``.

    References
    ----------
    Spencer, J.W. (1971). Fourier series representation of the position of the sun. Search 2(5), 172.
    Gueymard, C.A. (2004). The sun's total and spectral irradiance for solar energy applications and
    solar radiation models. Solar Energy 76(4), 423-453.
    Reda, I. and Andreas, A. (2004). Solar position algorithm for solar radiation applications.
    Solar Energy 76(5), 577-589.
    """
    import pvlib

    if method in ("spencer", "asce") and times.tz is not None:
        # these use the UTC day of year only (as pvlib does for timestamps); passing it directly
        # avoids a pandas accessor that pvlib still calls
        when: pd.DatetimeIndex | np.ndarray = np.asarray(times.tz_convert("UTC").day_of_year, dtype=float)
    else:
        when = times
    out = pvlib.irradiance.get_extra_radiation(when, solar_constant=solar_constant_w_m2, method=method)
    return pd.Series(np.asarray(out, dtype=float), index=times, name="dni_extra_w_m2")


def angle_of_incidence_deg(
    tilt_deg: float,
    azimuth_deg: float,
    sun_zenith_deg: np.ndarray | pd.Series | float,
    sun_azimuth_deg: np.ndarray | pd.Series | float,
) -> np.ndarray:
    """Angle between the sun's rays and the normal of a plane.

    Method
    ------
    cos(theta) = cos(z) cos(beta) + sin(z) sin(beta) cos(a_s - a), with z the sun's zenith, a_s its
    azimuth, beta the plane's tilt and a its azimuth (pvlib ``irradiance.aoi``).

    Parameters
    ----------
    tilt_deg : float
        Tilt of the plane from horizontal [deg], 0..180 (90 = vertical facade).
    azimuth_deg : float
        Direction the plane faces [deg] from north, clockwise (180 = south).
    sun_zenith_deg, sun_azimuth_deg : array-like
        Solar zenith [deg] and azimuth [deg] (from north, clockwise).

    Returns
    -------
    numpy.ndarray
        Angle of incidence [deg], 0..180; above 90 the sun is behind the plane.

    References
    ----------
    Duffie, J.A. and Beckman, W.A. (2013). Solar Engineering of Thermal Processes, 4th ed., Wiley,
    section 1.6.
    """
    import pvlib

    return np.asarray(pvlib.irradiance.aoi(tilt_deg, azimuth_deg, sun_zenith_deg, sun_azimuth_deg),
                      dtype=float)
