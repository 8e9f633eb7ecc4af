"""Everything a source model may need to know about the spot, computed once per spot."""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import numpy as np
import pandas as pd

from .files import FolderFiles, SiteFiles
from .sun import extraterrestrial_normal_w_m2, sun_position
from .timegrid import HOURS_PER_YEAR


@dataclass
class SpotContext:
    """The spot's place, weather year and indoor climate, shared by all source models.

    Attributes
    ----------
    weather : pandas.DataFrame
        8760 rows indexed by hour-start local standard time. Columns (the one vocabulary):
        ``ghi_w_m2``, ``dni_w_m2``, ``dhi_w_m2`` [W/m2], ``temp_air_c`` [degC],
        ``wind_speed_m_s`` [m/s]; optionally ``global_illum_lx``, ``diffuse_illum_lx``,
        ``direct_illum_lx`` [lx], ``pressure_pa`` [Pa], ``dew_point_c`` [degC].
    latitude_deg, longitude_deg : float
        Degrees north / east.
    altitude_m : float
        Metres above sea level.
    utc_offset_h : float
        Local standard time offset from UTC [h].
    indoor_air_c : float
        Indoor air temperature where the spot is indoors [degC].
    indoors : bool
        Whether the spot (and the node's store) sits indoors.
    base_dir : Path
        Folder of the site file; relative file names resolve against it when ``files`` is not given.
    files : SiteFiles, optional
        Where the files the site names are read from (the one rule of :mod:`siteharvest.files`).
    """

    weather: pd.DataFrame
    latitude_deg: float
    longitude_deg: float
    altitude_m: float = 0.0
    utc_offset_h: float = 0.0
    indoor_air_c: float = 21.0
    indoors: bool = False
    base_dir: Path = field(default_factory=Path.cwd)
    files: SiteFiles | None = None

    def __post_init__(self) -> None:
        if len(self.weather) != HOURS_PER_YEAR:
            raise ValueError(f"weather must have {HOURS_PER_YEAR} rows, has {len(self.weather)}")

    @property
    def index(self) -> pd.DatetimeIndex:
        return self.weather.index

    @cached_property
    def solar_position(self) -> pd.DataFrame:
        """Solar position at the middle of each hour (pvlib NREL SPA), indexed like ``weather``.

        Columns as pvlib returns them: ``apparent_zenith``, ``zenith``, ``azimuth``, ... [deg].
        """
        mid = self.index + pd.Timedelta(minutes=30)
        pressure = (self.weather["pressure_pa"].to_numpy() if "pressure_pa" in self.weather
                    else None)
        pos = sun_position(mid, self.latitude_deg, self.longitude_deg, altitude_m=self.altitude_m,
                           pressure_pa=pressure, temp_air_c=self.weather["temp_air_c"].to_numpy())
        pos.index = self.index
        return pos

    @cached_property
    def dni_extra_w_m2(self) -> pd.Series:
        """Extraterrestrial normal irradiance for each hour [W/m2] (pvlib, Spencer, 1366.1 W/m2)."""
        return extraterrestrial_normal_w_m2(self.index)

    @property
    def air_temp_c(self) -> np.ndarray:
        """Air temperature around the spot [degC]: outdoor air outdoors, ``indoor_air_c`` indoors."""
        if self.indoors:
            return np.full(HOURS_PER_YEAR, float(self.indoor_air_c))
        return self.weather["temp_air_c"].to_numpy(dtype=float)

    def resolve(self, name: str | Path, field: str = "file") -> Path:
        """Where to read a file the site names in ``field`` (SiteInputError when it may not be read)."""
        files = self.files if self.files is not None else FolderFiles(Path(self.base_dir))
        return files.path_of(str(name), field)
