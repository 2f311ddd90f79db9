"""Densities of common engineering materials, each with the source it comes from.

Every value here is a nominal room-temperature density of the solid material
(kg/m³). Real parts differ: alloys vary by a percent or two with composition,
wood by tens of percent with species and moisture, and 3D-printed parts with
their infill (calibrate those with a weighed ``measured_mass`` in the manifest).

Sources: every density below was written down **from memory** of the named
standard, handbook or manufacturer data sheet; none was re-checked against the
document while writing this table (no network access). The ``from_memory`` flag
says so in every listing and in the JSON, so a user can tell a value to verify
from one that was verified. Replace a flag by ``False`` only after checking the
value against the cited document.

Users override or extend the table in a manifest's ``[materials]`` table.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

from .errors import InputValueError


@dataclass(frozen=True, slots=True, eq=False)
class Material:
    """One material of the table.

    Attributes
    ----------
    name : key used in manifests (lower case, words joined by ``_``)
    density : float, kg/m³
    description : what the name means, in words
    source : where the value is published
    from_memory : true when the value was recalled, not re-read from ``source``
    """

    name: str
    density: float
    description: str
    source: str
    from_memory: bool = True


def _m(name: str, density: float, description: str, source: str) -> Material:
    return Material(name, float(density), description, source, True)


#: The built-in table, by name. Every value from memory (see the module docstring).
MATERIALS: dict[str, Material] = {
    material.name: material
    for material in (
        # --- steels and irons
        _m("steel_structural", 7850, "structural carbon steel (S235, S355, ASTM A36)",
           "EN 1993-1-1 (Eurocode 3), clause 3.2.6: unit mass of steel 7850 kg/m^3"),
        _m("steel_carbon_1045", 7870, "medium-carbon steel AISI/SAE 1045 (C45)",
           "ASM Handbook Vol. 1, properties of carbon steels: 7.87 g/cm^3"),
        _m("steel_alloy_4140", 7850, "chromium-molybdenum steel AISI 4140 (42CrMo4)",
           "ASM Handbook Vol. 1, properties of low-alloy steels: 7.85 g/cm^3"),
        _m("stainless_304", 7900, "austenitic stainless steel 304 (1.4301)",
           "EN 10088-1, Annex (physical properties), grade 1.4301: 7.9 kg/dm^3"),
        _m("stainless_316", 8000, "austenitic stainless steel 316 (1.4401)",
           "EN 10088-1, Annex (physical properties), grade 1.4401: 8.0 kg/dm^3"),
        _m("cast_iron_grey", 7200, "grey cast iron (EN-GJL-250)",
           "EN 1561 informative annex, grey cast iron: 7.2 kg/dm^3"),
        # --- aluminium and magnesium alloys
        _m("aluminium_6061", 2700, "wrought aluminium alloy 6061 (AlMg1SiCu), any temper",
           "Aluminum Association, Aluminum Standards and Data: 6061 density 0.098 lb/in^3 = 2.70 g/cm^3"),
        _m("aluminium_6082", 2700, "wrought aluminium alloy 6082 (AlSi1MgMn)",
           "EN 573 / EN 755 alloy data, 6082: 2.70 g/cm^3"),
        _m("aluminium_7075", 2810, "wrought aluminium alloy 7075 (AlZn5.5MgCu)",
           "Aluminum Association, Aluminum Standards and Data: 7075 density 0.101 lb/in^3 = 2.81 g/cm^3"),
        _m("aluminium_2024", 2780, "wrought aluminium alloy 2024 (AlCu4Mg1)",
           "Aluminum Association, Aluminum Standards and Data: 2024 density 0.100 lb/in^3 = 2.78 g/cm^3"),
        _m("aluminium_5083", 2660, "wrought aluminium alloy 5083 (AlMg4.5Mn0.7)",
           "Aluminum Association, Aluminum Standards and Data: 5083 density 0.096 lb/in^3 = 2.66 g/cm^3"),
        _m("magnesium_az31b", 1770, "wrought magnesium alloy AZ31B",
           "ASM Handbook Vol. 2, properties of magnesium alloys: AZ31B 1.77 g/cm^3"),
        # --- titanium
        _m("titanium_grade2", 4510, "commercially pure titanium grade 2",
           "ASM Handbook Vol. 2, properties of titanium: CP grade 2 4.51 g/cm^3"),
        _m("titanium_ti6al4v", 4430, "titanium alloy Ti-6Al-4V (grade 5)",
           "ASM Handbook Vol. 2, properties of titanium alloys: Ti-6Al-4V 4.43 g/cm^3"),
        # --- copper alloys
        _m("copper_c11000", 8890, "electrolytic tough-pitch copper C11000 (Cu-ETP)",
           "Copper Development Association, alloy data C11000: 0.321 lb/in^3 = 8.89 g/cm^3"),
        _m("brass_c36000", 8500, "free-cutting brass C36000 (CuZn36Pb3)",
           "Copper Development Association, alloy data C36000: 0.307 lb/in^3 = 8.50 g/cm^3"),
        _m("brass_c26000", 8530, "cartridge brass C26000 (CuZn30)",
           "Copper Development Association, alloy data C26000: 0.308 lb/in^3 = 8.53 g/cm^3"),
        _m("bronze_c93200", 8930, "bearing bronze C93200 (SAE 660)",
           "Copper Development Association, alloy data C93200: 0.322 lb/in^3 = 8.93 g/cm^3"),
        # --- dense metals
        _m("lead", 11340, "pure lead",
           "CRC Handbook of Chemistry and Physics, density of the elements: Pb 11.34 g/cm^3"),
        _m("tungsten", 19300, "pure tungsten",
           "CRC Handbook of Chemistry and Physics, density of the elements: W 19.3 g/cm^3"),
        # --- 3D-printing and engineering plastics (solid, 100 % dense)
        _m("pla", 1240, "polylactic acid, 3D-printing filament (solid)",
           "NatureWorks Ingeo 4043D technical data sheet: specific gravity 1.24"),
        _m("abs", 1040, "acrylonitrile butadiene styrene (solid)",
           "typical ABS resin data sheets (e.g. ASTM D792 specific gravity 1.04)"),
        _m("petg", 1270, "polyethylene terephthalate glycol, 3D-printing filament (solid)",
           "Eastman Eastar 6763 copolyester data sheet: specific gravity 1.27"),
        _m("tpu_95a", 1220, "thermoplastic polyurethane, shore 95A filament (solid)",
           "Ultimaker TPU 95A technical data sheet: density 1.22 g/cm^3"),
        _m("nylon_pa12", 1010, "polyamide 12, injection-moulded or filament (solid)",
           "Evonik Vestamid L / typical PA12 data sheets (ISO 1183): 1.01 g/cm^3"),
        _m("nylon_pa6", 1140, "polyamide 6 (solid, dry)",
           "typical PA6 data sheets (ISO 1183): 1.14 g/cm^3"),
        _m("polycarbonate", 1200, "polycarbonate (solid)",
           "Covestro Makrolon 2405 data sheet (ISO 1183): 1.20 g/cm^3"),
        _m("acetal_pom", 1410, "polyoxymethylene homopolymer (acetal)",
           "DuPont Delrin 100 data sheet (ISO 1183): 1.42 g/cm^3; 1.41 for copolymer grades"),
        _m("acrylic_pmma", 1190, "polymethyl methacrylate (acrylic glass)",
           "typical cast PMMA data sheets (ISO 1183): 1.19 g/cm^3"),
        _m("cfrp_quasi_isotropic", 1550, "carbon-fibre epoxy laminate, about 55-60 % fibre volume",
           "MIL-HDBK-17-2 (composite materials handbook): typical carbon-epoxy laminate 1.55 g/cm^3 (range 1.5 to 1.6)"),
        _m("fr4", 1850, "glass-epoxy circuit-board laminate FR-4",
           "IPC-4101 laminate data, typical FR-4 density 1.85 g/cm^3"),
        # --- wood and others
        _m("wood_softwood_c24", 420, "structural softwood strength class C24 (mean density)",
           "EN 338:2016 Table 1, class C24: mean density 420 kg/m^3 (at 12 % moisture)"),
        _m("wood_beech", 720, "European beech, air-dry",
           "USDA Forest Products Laboratory, Wood Handbook (FPL-GTR-190), beech at 12 % moisture: about 0.72 g/cm^3"),
        _m("plywood_birch", 680, "birch plywood",
           "EN 13986 / typical birch plywood manufacturer data: 680 kg/m^3"),
        _m("glass_soda_lime", 2500, "soda-lime-silica float glass",
           "EN 572-1, physical characteristics: density 2500 kg/m^3"),
        _m("concrete_normal", 2400, "normal-weight plain concrete",
           "EN 1991-1-1 (Eurocode 1) Table A.1: normal-weight concrete 24 kN/m^3"),
        _m("water", 1000, "fresh water (999.97 kg/m^3 at 4 degC; common simulator default)",
           "CRC Handbook of Chemistry and Physics, density of water: 0.99997 g/cm^3 at 4 degC"),
    )
}  # fmt: skip


def normalize_name(name: str) -> str:
    """The table key for ``name``: lower case, spaces and hyphens as ``_``."""
    return re.sub(r"[\s\-]+", "_", str(name).strip().lower())


def material_names() -> tuple[str, ...]:
    """All names of the built-in table, sorted."""
    return tuple(sorted(MATERIALS))


def find_material(name: str, overrides: dict[str, Material] | None = None, *, source: str | None = None) -> Material:
    """Look up a material by name; ``overrides`` (from a manifest) win over the table.

    Raises
    ------
    InputValueError
        Unknown name; the message suggests the closest known names.
    """
    key = normalize_name(name)
    table = dict(MATERIALS)
    if overrides:
        table.update({normalize_name(k): v for k, v in overrides.items()})
    if key in table:
        return table[key]
    close = difflib.get_close_matches(key, list(table), n=3, cutoff=0.5)
    hint = f"a known material such as {', '.join(close)}" if close else "a known material (see `meshprops materials`)"
    raise InputValueError("material", hint, name, source=source)


def user_material(name: str, density: float, source: str = "user value from the manifest") -> Material:
    """A manifest-defined material (an override or an addition). Its value is the user's, not from memory."""
    return Material(normalize_name(name), float(density), f"user material {name!r}", source, False)


def material_to_dict(material: Material) -> dict:
    """A material as plain JSON data (density in kg/m³)."""
    return {
        "name": material.name,
        "density": material.density,
        "description": material.description,
        "source": material.source,
        "from_memory": material.from_memory,
    }
