"""Air-cleaning equipment and contaminants stated in a schedule (for the dilution analysis)."""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from airgate.models.quantities import Q


class _Model(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, str_strip_whitespace=True)


class Filter(_Model):
    """A system's particle filter (on the mixed outdoor and recirculated air)."""

    merv: int | None = Field(None, ge=1, le=16, description="MERV rating. [–]")
    efficiency: float | None = Field(
        None, ge=0, le=1, allow_inf_nan=False,
        description="Single-pass efficiency for every particle contaminant, overriding MERV. [–]")

    @model_validator(mode="after")
    def _something(self) -> Filter:
        if self.merv is None and self.efficiency is None:
            raise ValueError("a filter needs merv or efficiency")
        return self


class AirCleaner(_Model):
    """An in-room air cleaner."""

    name: str | None = Field(None, description="Name or model. [–]")
    cadr: Q("airflow", "Clean air delivery rate. [cfm or L/s]", positive=True)


class Contaminant(_Model):
    """A contaminant to analyse besides occupant CO2. Amounts in ``unit``; concentrations per m³."""

    id: str = Field(min_length=1, pattern=r"^[A-Za-z0-9][A-Za-z0-9._-]*$",
                    description="Identifier. [–]")
    label: str | None = Field(None, description="What it is. [–]")
    unit: str = Field("particles", min_length=1,
                      description="Unit of amount (quanta, µg, particles …); concentrations are "
                                  "this unit per m³. [–]")
    kind: Literal["particle", "gas"] = Field(
        "particle", description="Particles are filtered and may deposit; gases are not. [–]")
    size_range: Literal["E1", "E2", "E3"] = Field(
        "E2", description="Particle size range for MERV efficiency: E1 0.3–1, E2 1–3, "
                          "E3 3–10 µm. [–]")
    per_person: float = Field(0.0, ge=0, allow_inf_nan=False,
                              description="Emission per occupant present. [unit/h per person]")
    per_area: float = Field(0.0, ge=0, allow_inf_nan=False,
                            description="Emission per floor area. [unit/h per m²]")
    per_zone: float = Field(0.0, ge=0, allow_inf_nan=False,
                            description="Fixed emission in each zone. [unit/h]")
    outdoor: float = Field(0.0, ge=0, allow_inf_nan=False,
                           description="Outdoor concentration. [unit/m³]")
    deposition: float = Field(0.0, ge=0, allow_inf_nan=False,
                              description="Deposition rate onto surfaces. [1/h]")
    inactivation: float | None = Field(None, ge=0, allow_inf_nan=False,
                                       description="Inactivation or decay rate. [1/h]")
    half_life: float | None = Field(None, gt=0, allow_inf_nan=False,
                                    description="Half-life, instead of inactivation. [h]")
    limit: float | None = Field(None, gt=0, allow_inf_nan=False,
                                description="Limit concentration to report against; on a system "
                                            "on the IAQ procedure (procedure: iaqp) the design "
                                            "limit of a design compound. [unit/m³]")
    limit_source: str | None = Field(
        None, min_length=1, max_length=300,
        description="Where the limit comes from (guideline or authority, edition, table), "
                    "shown beside it in the report. [–]")

    @model_validator(mode="after")
    def _one_decay(self) -> Contaminant:
        if self.inactivation is not None and self.half_life is not None:
            raise ValueError("give inactivation or half_life, not both")
        if self.limit_source is not None and self.limit is None:
            raise ValueError("limit_source names where a limit comes from; give the limit too")
        if self.kind == "gas" and self.deposition:
            raise ValueError("a gas does not deposit; set deposition to 0 or kind: particle")
        return self
