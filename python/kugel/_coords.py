"""Finding the latitude and longitude of an xarray object, by the rules of the command line's
grid reader: CF ``standard_name``, then ``units`` (degrees_north / degrees_east), then ``axis``
(Y / X), then the names lat/latitude and lon/long/longitude."""

_LAT_UNITS = {"degrees_north", "degree_north", "degree_n", "degrees_n", "degreen", "degreesn"}
_LON_UNITS = {"degrees_east", "degree_east", "degree_e", "degrees_e", "degreee", "degreese"}


def _axis_of(name, attrs):
    lower = {k: str(v).lower() for k, v in attrs.items() if k in ("standard_name", "units", "axis")}
    standard = lower.get("standard_name")
    if standard in ("latitude", "grid_latitude"):
        return "lat"
    if standard in ("longitude", "grid_longitude"):
        return "lon"
    units = lower.get("units")
    if units in _LAT_UNITS:
        return "lat"
    if units in _LON_UNITS:
        return "lon"
    degrees = units is None or units.startswith("degree")
    axis = lower.get("axis")
    if axis == "y" and degrees:
        return "lat"
    if axis == "x" and degrees:
        return "lon"
    if not degrees:
        return None
    return {"lat": "lat", "latitude": "lat", "nav_lat": "lat", "lon": "lon", "long": "lon",
            "longitude": "lon", "nav_lon": "lon"}.get(str(name).lower())


def lat_lon_dims(obj, lat=None, lon=None):
    """The (latitude, longitude) dimension names of a DataArray or Dataset variable."""
    found = {"lat": lat, "lon": lon}
    for dim in obj.dims:
        attrs = obj[dim].attrs if dim in obj.coords else {}
        kind = _axis_of(dim, attrs)
        if kind and found[kind] is None:
            found[kind] = dim
    missing = [k for k in ("lat", "lon") if found[k] is None]
    if missing:
        raise ValueError(
            f"no {' and no '.join('latitude' if k == 'lat' else 'longitude' for k in missing)} "
            f"dimension among {tuple(obj.dims)} (latitude and longitude are recognised by "
            "standard_name, units degrees_north/degrees_east, axis Y/X, or the names lat/lon; "
            "or pass lat= and lon= with the dimension names)"
        )
    for k in ("lat", "lon"):
        if found[k] not in obj.dims:
            raise ValueError(f"{found[k]!r} is not a dimension of the array {tuple(obj.dims)}")
        if found[k] not in obj.coords:
            raise ValueError(f"dimension {found[k]!r} has no coordinate values (degrees)")
    return found["lat"], found["lon"]
