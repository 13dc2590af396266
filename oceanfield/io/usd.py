"""An OpenUSD stage of an animated shot, through the ``usd-core`` package (optional extra).

Knows nothing of physics: it takes arrays already in scene axes and units, and frame
numbers, and writes them as a USD stage; it also reads a layout prim's animated origin
(`read_prim_track`, for a course).

The stage (``/Shot`` is its default prim):

* stage metadata ``metersPerUnit``, ``upAxis``, ``timeCodesPerSecond`` =
  ``framesPerSecond`` = the frame rate, start and end time codes = the first and last
  frame; one time sample per frame, at its frame number;
* ``/Shot/Sea``: a ``Mesh`` of quads with time-sampled ``points``, ``normals`` (vertex
  interpolation) and ``extent``, a ``primvars:st`` texture coordinate per vertex, and a
  bound material;
* ``/Shot/Looks/SeaMaterial``: a ``UsdPreviewSurface`` whose ``diffuseColor`` comes from a
  ``UsdUVTexture`` of the foam sequence (scale and bias blend the water colour to white),
  plus one ``UsdUVTexture`` per other map sequence with its file time-sampled frame by
  frame, documented but not wired (the mesh is already displaced; a normal map in scene
  axes is not the tangent-space normal ``UsdPreviewSurface`` expects);
* ``/Shot/Wake`` (a preset with vessels): a second mesh, a patch over the wake region, with
  its own material ``/Shot/Looks/WakeMaterial`` (the same shape, textures clamped);
* ``/Shot/Probes/<name>``: an ``Xform`` with a time-sampled translate per probe;
* ``/Shot/Bodies/<name>``: an ``Xform`` with a time-sampled 4×4 transform per body.

`write_stage` writes to a temporary beside the final name and renames it into place only
when complete (``io.atomic``). A ``.usda`` name gives the text format, ``.usd`` or
``.usdc`` the binary one. Without ``usd-core`` installed, `require_usd` raises a
ValueError whose one line names the extra to install.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np
from numpy.typing import NDArray

from oceanfield.io.atomic import atomic_output, prepare_output

__all__ = ["USD_SUFFIXES", "Look", "PrimTrack", "SeaMesh", "read_prim_track", "require_usd", "write_stage"]

#: File suffixes a stage can be written as.
USD_SUFFIXES = (".usda", ".usd", ".usdc")

_INSTALL = ("USD files (a scene to write, a layout to read) need the usd-core package; "
            "install it with: pip install 'oceanfield[usd]'")


def require_usd() -> None:
    """Raise ValueError (one line naming the extra to install) when usd-core is missing."""
    try:
        from pxr import Usd  # noqa: F401
    except ImportError:
        raise ValueError(_INSTALL) from None


@dataclass(frozen=True, eq=False)
class SeaMesh:
    """A quad mesh whose points move from frame to frame.

    Attributes
    ----------
    face_vertex_counts, face_vertex_indices : NDArray[np.int32]
        USD's mesh topology (4 per quad; vertex indices, counter-clockwise seen from above).
    st : NDArray[np.float32], shape (V, 2)
        Texture coordinate of each vertex.
    points, normals : NDArray[np.float32], shape (F, V, 3)
        Vertex positions (scene units) and unit normals per frame, scene axes.
    """

    face_vertex_counts: NDArray[np.int32]
    face_vertex_indices: NDArray[np.int32]
    st: NDArray[np.float32]
    points: NDArray[np.float32]
    normals: NDArray[np.float32]


@dataclass(frozen=True, eq=False)
class Look:
    """The preview material: texture files per frame by map name, and the water colour."""

    textures: Mapping[str, Sequence[str]] = field(default_factory=dict)
    foam_map: str | None = "foam"
    water_colour: tuple[float, float, float] = (0.02, 0.08, 0.10)
    notes: Mapping[str, str] = field(default_factory=dict)
    #: how textures wrap beyond [0, 1]: ``repeat`` for the tiled sea, ``clamp`` for a patch
    wrap: str = "repeat"


def write_stage(
    path: str | os.PathLike[str],
    *,
    metres_per_unit: float,
    up_axis: str,
    fps: float,
    frames: Sequence[int],
    mesh: SeaMesh,
    look: Look | None = None,
    probes: Mapping[str, NDArray[np.float64]] | None = None,
    bodies: Mapping[str, NDArray[np.float64]] | None = None,
    comment: str = "",
    wake: SeaMesh | None = None,
    wake_look: Look | None = None,
) -> Path:
    """Write the shot as a USD stage (see the module notes); returns the path.

    Parameters
    ----------
    path : path
        Ends in .usda (text), .usd or .usdc (binary).
    metres_per_unit : float
        Stage ``metersPerUnit``.
    up_axis : {"y", "z"}
        Stage ``upAxis``.
    fps : float
        Time codes per second (and frames per second).
    frames : sequence of int
        Frame numbers, one per time sample, increasing.
    mesh : SeaMesh
    look : Look, optional
        The material's texture sequences (one file per frame, relative to the stage's
        folder or absolute).
    probes : mapping of name to (F, 3) array, optional
        Position of each probe per frame (scene units and axes).
    bodies : mapping of name to (F, 4, 4) array, optional
        Transform of each body per frame in USD's row-vector convention (translation in
        the last row).
    comment : str
        The root layer's comment.
    wake, wake_look : SeaMesh and Look, optional
        A second mesh, ``/Shot/Wake`` (a patch over a wake region), and its material
        ``/Shot/Looks/WakeMaterial``.
    """
    require_usd()
    from pxr import Gf, Sdf, Tf, Usd, UsdGeom, UsdShade, Vt

    final = Path(path)
    if final.suffix.lower() not in USD_SUFFIXES:
        raise ValueError(f"--out: {str(final)!r} is not allowed; allowed: a file ending in .usda, .usd or .usdc")
    for group, items in (("Probes", probes or {}), ("Bodies", bodies or {})):
        _distinct_prims(group, list(items), Tf.MakeValidIdentifier)
    frames = [int(f) for f in frames]
    count = len(frames)
    stage = Usd.Stage.CreateInMemory()
    UsdGeom.SetStageMetersPerUnit(stage, float(metres_per_unit))
    UsdGeom.SetStageUpAxis(stage, UsdGeom.Tokens.y if up_axis == "y" else UsdGeom.Tokens.z)
    stage.SetTimeCodesPerSecond(float(fps))
    stage.SetFramesPerSecond(float(fps))
    stage.SetStartTimeCode(frames[0])
    stage.SetEndTimeCode(frames[-1])
    if comment:
        stage.GetRootLayer().comment = comment
    shot = UsdGeom.Xform.Define(stage, "/Shot")
    stage.SetDefaultPrim(shot.GetPrim())

    sea = _mesh(stage, "/Shot/Sea", mesh, frames, Sdf, Usd, UsdGeom, Vt)
    if look is not None:
        material = _material(stage, look, frames, Sdf, Usd, UsdShade)
        UsdShade.MaterialBindingAPI.Apply(sea.GetPrim()).Bind(material)
    if wake is not None:
        patch = _mesh(stage, "/Shot/Wake", wake, frames, Sdf, Usd, UsdGeom, Vt)
        if wake_look is not None:
            material = _material(stage, wake_look, frames, Sdf, Usd, UsdShade, root="/Shot/Looks/WakeMaterial")
            UsdShade.MaterialBindingAPI.Apply(patch.GetPrim()).Bind(material)

    for group, items in (("Probes", probes or {}), ("Bodies", bodies or {})):
        if not items:
            continue
        UsdGeom.Scope.Define(stage, f"/Shot/{group}")
        for name, values in items.items():
            values = np.asarray(values, dtype=np.float64)
            if values.shape[0] != count:
                raise ValueError(f"{group.lower()} {name}: {values.shape[0]} samples for {count} frames")
            xform = UsdGeom.Xform.Define(stage, f"/Shot/{group}/{Tf.MakeValidIdentifier(name)}")
            if group == "Probes":
                op = xform.AddTranslateOp()
                for frame, value in zip(frames, values):
                    op.Set(Gf.Vec3d(*map(float, value)), Usd.TimeCode(frame))
            else:
                op = xform.AddTransformOp()
                for frame, value in zip(frames, values):
                    op.Set(Gf.Matrix4d(value.tolist()), Usd.TimeCode(frame))

    prepare_output(final)
    with atomic_output(final) as temporary:
        if not stage.GetRootLayer().Export(str(temporary)):
            raise OSError(f"USD could not export the stage to {temporary}")
    return final


def _distinct_prims(group: str, names: Sequence[str], identifier) -> None:
    """Refuse two names that ``identifier`` (USD's valid-identifier rule) makes one prim."""
    seen: dict[str, str] = {}
    for name in names:
        prim = identifier(name)
        if prim in seen:
            raise ValueError(f"{group.lower()}: `{seen[prim]}` and `{name}` would both be the prim "
                             f"/Shot/{group}/{prim}; allowed: names that differ in their letters, digits or _ "
                             "(a prim name holds nothing else)")
        seen[prim] = name


def _mesh(stage, path: str, mesh: SeaMesh, frames: Sequence[int], Sdf, Usd, UsdGeom, Vt):
    """A quad mesh with time-sampled points, normals and extent, and its ``st`` coordinates."""
    prim = UsdGeom.Mesh.Define(stage, path)
    prim.CreateSubdivisionSchemeAttr(UsdGeom.Tokens.none)
    prim.CreateFaceVertexCountsAttr(Vt.IntArray.FromNumpy(np.ascontiguousarray(mesh.face_vertex_counts, np.int32)))
    prim.CreateFaceVertexIndicesAttr(Vt.IntArray.FromNumpy(np.ascontiguousarray(mesh.face_vertex_indices, np.int32)))
    points_attr = prim.CreatePointsAttr()
    normals_attr = prim.CreateNormalsAttr()
    prim.SetNormalsInterpolation(UsdGeom.Tokens.vertex)
    extent_attr = prim.CreateExtentAttr()
    for index, frame in enumerate(frames):
        time = Usd.TimeCode(frame)
        points = np.ascontiguousarray(mesh.points[index], dtype=np.float32)
        points_attr.Set(Vt.Vec3fArray.FromNumpy(points), time)
        normals_attr.Set(Vt.Vec3fArray.FromNumpy(np.ascontiguousarray(mesh.normals[index], dtype=np.float32)), time)
        extent_attr.Set(Vt.Vec3fArray.FromNumpy(np.stack([points.min(axis=0), points.max(axis=0)])), time)
    st = UsdGeom.PrimvarsAPI(prim.GetPrim()).CreatePrimvar(
        "st", Sdf.ValueTypeNames.TexCoord2fArray, UsdGeom.Tokens.vertex)
    st.Set(Vt.Vec2fArray.FromNumpy(np.ascontiguousarray(mesh.st, dtype=np.float32)))
    return prim


def _material(stage, look: Look, frames: Sequence[int], Sdf, Usd, UsdShade, root: str = "/Shot/Looks/SeaMaterial"):
    """The preview material: foam → diffuse colour, every map sequence as a texture."""
    material = UsdShade.Material.Define(stage, root)
    surface = UsdShade.Shader.Define(stage, f"{root}/PreviewSurface")
    surface.CreateIdAttr("UsdPreviewSurface")
    water = tuple(float(c) for c in look.water_colour)
    diffuse = surface.CreateInput("diffuseColor", Sdf.ValueTypeNames.Color3f)
    diffuse.Set(water)
    surface.CreateInput("roughness", Sdf.ValueTypeNames.Float).Set(0.05)
    surface.CreateInput("metallic", Sdf.ValueTypeNames.Float).Set(0.0)
    surface.CreateInput("ior", Sdf.ValueTypeNames.Float).Set(1.33)
    material.CreateSurfaceOutput().ConnectToSource(surface.ConnectableAPI(), "surface")

    reader = UsdShade.Shader.Define(stage, f"{root}/TextureCoordinates")
    reader.CreateIdAttr("UsdPrimvarReader_float2")
    reader.CreateInput("varname", Sdf.ValueTypeNames.String).Set("st")  # a string since USD 21.11
    reader_output = reader.CreateOutput("result", Sdf.ValueTypeNames.Float2)

    for name, files in look.textures.items():
        if len(files) != len(frames):
            raise ValueError(f"texture {name}: {len(files)} files for {len(frames)} frames")
        texture = UsdShade.Shader.Define(stage, f"{root}/{name.capitalize()}Texture")
        texture.CreateIdAttr("UsdUVTexture")
        file_input = texture.CreateInput("file", Sdf.ValueTypeNames.Asset)
        for frame, file in zip(frames, files):
            file_input.Set(Sdf.AssetPath(file), Usd.TimeCode(frame))
        texture.CreateInput("st", Sdf.ValueTypeNames.Float2).ConnectToSource(reader_output)
        texture.CreateInput("wrapS", Sdf.ValueTypeNames.Token).Set(look.wrap)
        texture.CreateInput("wrapT", Sdf.ValueTypeNames.Token).Set(look.wrap)
        texture.CreateInput("sourceColorSpace", Sdf.ValueTypeNames.Token).Set("raw")
        rgb = texture.CreateOutput("rgb", Sdf.ValueTypeNames.Float3)
        texture.CreateOutput("r", Sdf.ValueTypeNames.Float)
        if name == look.foam_map:
            # foam f in [0, 1] → water + f·(white − water): the texture's scale and bias
            texture.CreateInput("scale", Sdf.ValueTypeNames.Float4).Set(tuple(1.0 - c for c in water) + (1.0,))
            texture.CreateInput("bias", Sdf.ValueTypeNames.Float4).Set(water + (0.0,))
            diffuse.ConnectToSource(rgb)
        note = look.notes.get(name)
        if note:
            texture.GetPrim().SetDocumentation(note)
    return material


@dataclass(frozen=True, eq=False)
class PrimTrack:
    """Where a prim's origin is over time in a USD layout, as the file stores it.

    ``codes`` are the time codes sampled (increasing), ``points`` (codes, 3) the prim's
    world-space origin at each in the stage's own units and axes, with the stage's
    ``metres_per_unit``, ``up_axis`` (``"y"`` or ``"z"``; each None where the layout does
    not author it) and ``codes_per_second``.
    """

    path: Path
    prim: str
    codes: NDArray[np.float64]
    points: NDArray[np.float64]
    metres_per_unit: float | None
    up_axis: str | None
    codes_per_second: float


def read_prim_track(path: str | os.PathLike[str], prim: str) -> PrimTrack:
    """The world-space origin of ``prim`` at every time code where it or a parent moves.

    The time codes are the union of the time samples of the prim's and its ancestors'
    transform operations; the origin is the translation of the prim's local-to-world
    matrix there (``UsdGeom.Xformable.ComputeLocalToWorldTransform``).

    Raises
    ------
    ValueError
        One line: usd-core missing (naming the extra), the file not a stage, no such prim,
        a prim that is not transformable, or fewer than two time samples.
    """
    require_usd()
    from pxr import Sdf, Usd, UsdGeom

    path = Path(path)
    try:
        stage = Usd.Stage.Open(str(path))
    except Exception as error:  # noqa: BLE001 - pxr raises its own error types
        first = str(error).strip().splitlines()[0] if str(error).strip() else type(error).__name__
        raise ValueError(f"{path}: not a USD stage ({first})") from None
    if stage is None:
        raise ValueError(f"{path}: not a USD stage")
    if not Sdf.Path.IsValidPathString(prim) or not prim.startswith("/"):
        raise ValueError(f"{path}: `{prim}` is not an absolute prim path (e.g. /Layout/Boat)")
    found = stage.GetPrimAtPath(prim)
    if not found or not found.IsValid():
        raise ValueError(f"{path}: no prim at `{prim}`")
    xformable = UsdGeom.Xformable(found)
    if not xformable:
        raise ValueError(f"{path}: `{prim}` is a {found.GetTypeName() or 'typeless prim'}, not a transformable prim")
    codes: set[float] = set()
    walk = found
    while walk and walk.IsValid() and not walk.IsPseudoRoot():
        parent_xform = UsdGeom.Xformable(walk)
        if parent_xform:
            codes.update(float(code) for code in parent_xform.GetTimeSamples())
        walk = walk.GetParent()
    ordered = np.array(sorted(codes), dtype=np.float64)
    if ordered.size < 2:
        raise ValueError(f"{path}: `{prim}` is not animated (its transform has {ordered.size} time sample(s); "
                         f"a course needs at least two)")
    cache = UsdGeom.XformCache()
    points = np.empty((ordered.size, 3), dtype=np.float64)
    for i, code in enumerate(ordered):
        cache.SetTime(Usd.TimeCode(float(code)))
        translation = cache.GetLocalToWorldTransform(found).ExtractTranslation()
        points[i] = (translation[0], translation[1], translation[2])
    # USD's fallbacks when a layout does not say (centimetres, Y up) are left to the caller
    authored = stage.HasAuthoredMetadata
    metres = float(UsdGeom.GetStageMetersPerUnit(stage)) if authored("metersPerUnit") else None
    up = str(UsdGeom.GetStageUpAxis(stage)).lower() if authored("upAxis") else None
    return PrimTrack(path, prim, ordered, points, metres, up, float(stage.GetTimeCodesPerSecond()))
