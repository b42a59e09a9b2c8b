"""The user's own GeoJSON files drawn on the map (catchment, rivers, site boundaries), without tiles.

GeoJSON (RFC 7946) positions are ``[longitude, latitude]`` in WGS 84. Each file becomes one
:class:`Overlay`: its polygons as closed outlines, its lines, its points, with each feature's
``name`` property where it has one. Coordinates are read as given (no projection).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path


@dataclass
class Overlay:
    """One GeoJSON file as plot-ready coordinate lists (``None`` separates parts)."""

    name: str
    polygon_x: list = field(default_factory=list)
    polygon_y: list = field(default_factory=list)
    line_x: list = field(default_factory=list)
    line_y: list = field(default_factory=list)
    point_x: list = field(default_factory=list)
    point_y: list = field(default_factory=list)
    point_names: list = field(default_factory=list)
    features: int = 0


def _ring(target_x: list, target_y: list, coords, where: str) -> None:
    try:
        xs = [float(p[0]) for p in coords]
        ys = [float(p[1]) for p in coords]
    except (TypeError, ValueError, IndexError):
        raise ValueError(f"{where}: positions must be [longitude, latitude] numbers") from None
    target_x.extend(xs + [None])
    target_y.extend(ys + [None])


def _geometry(ov: Overlay, geom: dict, name: str, where: str) -> None:
    kind = (geom or {}).get("type")
    coords = (geom or {}).get("coordinates")
    if kind == "Polygon":
        for ring in coords or []:
            _ring(ov.polygon_x, ov.polygon_y, ring, where)
    elif kind == "MultiPolygon":
        for poly in coords or []:
            for ring in poly:
                _ring(ov.polygon_x, ov.polygon_y, ring, where)
    elif kind == "LineString":
        _ring(ov.line_x, ov.line_y, coords or [], where)
    elif kind == "MultiLineString":
        for line in coords or []:
            _ring(ov.line_x, ov.line_y, line, where)
    elif kind in ("Point", "MultiPoint"):
        points = [coords] if kind == "Point" else coords or []
        for p in points:
            try:
                ov.point_x.append(float(p[0]))
                ov.point_y.append(float(p[1]))
            except (TypeError, ValueError, IndexError):
                raise ValueError(f"{where}: a point must be [longitude, latitude]") from None
            ov.point_names.append(name)
    elif kind == "GeometryCollection":
        for g in (geom or {}).get("geometries") or []:
            _geometry(ov, g, name, where)
    elif geom is not None:
        raise ValueError(f"{where}: geometry type {kind!r} is not GeoJSON")


def load_overlay(path) -> Overlay:
    """Read one GeoJSON file (FeatureCollection, Feature or a bare geometry); errors name the file and feature."""
    path = Path(path)
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ValueError(f"{path}: cannot read the map overlay ({exc.strerror or exc})") from None
    except ValueError as exc:
        raise ValueError(f"{path}: not a GeoJSON file ({exc})") from None
    if not isinstance(doc, dict):
        raise ValueError(f"{path}: not a GeoJSON object")
    ov = Overlay(name=path.stem)
    features = doc.get("features") if doc.get("type") == "FeatureCollection" else [doc] if doc.get("type") == "Feature" \
        else [{"type": "Feature", "geometry": doc, "properties": {}}]
    for i, feature in enumerate(features or [], start=1):
        props = (feature or {}).get("properties") or {}
        name = str(props.get("name") or props.get("NAME") or "")
        _geometry(ov, (feature or {}).get("geometry"), name, f"{path.name}, feature {i}")
        ov.features += 1
    return ov


def load_overlays(paths) -> list[Overlay]:
    """Every overlay file, in the order given."""
    return [load_overlay(p) for p in (paths or ())]
