"""The verdict and its typed parts, as :func:`bemcheck.compare.verdict` builds them.

Frequencies are in Hz, levels and attenuations in dB, phases and angles in
degrees (the verdict is read by people and written to summary.json, the
edge where degrees belong).  A frequency that is None means "nowhere in the
band".  Sequences are tuples, one value per case frequency unless said
otherwise.  :mod:`bemcheck.results.verdict_summary` writes a Verdict to
summary.json and reads it back.

Examples
--------
>>> band = Band(mean=12.0, min=10.0, max=14.0, error_of_mean=0.2, error_max=0.5)
>>> band.mean - band.error_of_mean
11.8
"""

from dataclasses import dataclass

PASS, FAIL, UNRESOLVED = "PASS", "FAIL", "NOT RESOLVED"


@dataclass(frozen=True)
class Band:
    """A quantity over the band [dB]: its mean, least and largest value, and errors when known.

    ``error_of_mean`` bounds the error of the mean (the mean of the errors),
    ``error_max`` is the largest error; both None when no error is known.
    """

    mean: float
    min: float
    max: float
    error_of_mean: float | None = None
    error_max: float | None = None


@dataclass(frozen=True)
class FieldTrust:
    """How far one source's monopole field holds in one sector.

    ``trust_limit_hz``: lowest frequency where the field surely departs
    (None: nowhere); ``set_by``: "level" or "phase" (None without a limit);
    ``worst_departure_db``: the largest level departure in the sector [dB];
    ``other_bodies_db``: the largest level change the other bodies make to
    the field in the sector, |20 log10 |p_bem / p_own_body|| [dB] (None
    when the sources were not solved with their own bodies alone).
    """

    source: str
    trust_limit_hz: float | None
    set_by: str | None
    worst_departure_db: float
    other_bodies_db: float | None = None


@dataclass(frozen=True)
class SectorAttenuation:
    """Mean-square attenuation over one sector's directions [dB], per frequency, in each world.

    ``own_body`` is None when the sources were not solved with their own
    bodies alone.  The errors are those of the two scattered worlds.
    """

    predicted: tuple
    own_body: tuple | None
    as_designed: tuple
    reoptimised: tuple
    as_designed_error: tuple
    reoptimised_error: tuple


@dataclass(frozen=True)
class SectorJudgement:
    """The verdict in one tolerance sector (azimuths ``from_deg`` to ``to_deg`` [deg] in the far-field ``plane``).

    ``fields``: each source's monopole field (:class:`FieldTrust`), in the
    case's source order.  ``attenuation_*``: the controlled system's
    directional attenuation as designed; ``field_*``: any source's field.
    ``*_not_resolved_at_hz``: frequencies where the mesh cannot tell.
    ``mean_square``: None when the results hold no sector attenuation.
    """

    sector: str
    from_deg: float
    to_deg: float
    fields: tuple
    attenuation_limit_hz: float | None
    attenuation_departs_from_hz: float | None
    attenuation_not_resolved_at_hz: tuple
    field_departs: bool
    field_not_resolved_at_hz: tuple
    mean_square: SectorAttenuation | None = None
    plane: str | None = None

    @property
    def where(self):
        """The sector in words: its name and, when known, its plane.

        Examples
        --------
        >>> SectorJudgement("front", -30.0, 30.0, (), None, None, (), False, (), plane="xz").where
        'front (xz)'
        """
        return self.sector if self.plane is None else f"{self.sector} ({self.plane})"

    def trusted_fields(self):
        """The fields with a trust limit in the band, as (limit [Hz], source, set by), lowest first.

        Examples
        --------
        >>> s = SectorJudgement("all", 0.0, 360.0, (FieldTrust("a", None, None, 0.1),
        ...     FieldTrust("b", 900.0, "phase", 2.0)), None, None, (), True, ())
        >>> s.trusted_fields()
        [(900.0, 'b', 'phase')]
        """
        return sorted((f.trust_limit_hz, f.source, f.set_by) for f in self.fields if f.trust_limit_hz is not None)


@dataclass(frozen=True)
class DesignJudgement:
    """The power attenuation of one design (as designed or re-optimised) with scattering [dB].

    ``departs_from_hz``: lowest frequency where it surely falls short;
    ``limit_hz``: the crossing of the tolerated shortfall (None: none).
    """

    band_db: Band
    by_frequency_db: tuple
    error_by_frequency_db: tuple
    departs_from_hz: float | None
    limit_hz: float | None
    not_resolved_at_hz: tuple


@dataclass(frozen=True)
class AttenuationJudgement:
    """The power attenuation by the control sources: predicted (free field), as designed, re-optimised.

    ``worst_loss_db`` (predicted − as designed) is largest at ``worst_loss_at_hz``.
    """

    predicted_db: Band
    predicted_by_frequency_db: tuple
    as_designed: DesignJudgement
    reoptimised: DesignJudgement
    worst_loss_db: float
    worst_loss_at_hz: float


@dataclass(frozen=True)
class TermSplit:
    """How far one term moves a source's field: largest |level| [dB] and |phase| [deg] departure.

    ``max_at_hz``, ``max_at_azimuth_deg``, ``max_at_plane``: where the
    level departure is largest (the azimuth in that far-field plane; None
    in a summary written before directions named their plane);
    ``within_tolerance_up_to_hz``: None when within it over the band.
    """

    max_level_db: float
    max_phase_deg: float
    max_at_hz: float
    max_at_azimuth_deg: float
    within_tolerance_up_to_hz: float | None
    max_at_plane: str | None = None


@dataclass(frozen=True)
class SourceSplit:
    """One source's departure split: the source model (its own body) and the other bodies."""

    source: str
    source_model: TermSplit
    other_bodies: TermSplit


@dataclass(frozen=True)
class RuleOfThumb:
    """A frequency a rule of thumb flags.

    ``rule`` (e.g. "ka = 0.5"), ``what`` (the body or source), ``length_m``
    [m] and ``length`` (what that length is), ``frequency_hz``, ``in_band``
    ("below the band", "in the band", "above the band") and ``source`` (where
    the rule comes from).
    """

    rule: str
    what: str
    length_m: float
    length: str
    frequency_hz: float
    in_band: str
    source: str


@dataclass(frozen=True)
class JudgedTolerance:
    """The tolerances the verdict applied: level [dB], phase [deg], attenuation target and shortfall [dB]."""

    level_db: float
    phase_deg: float
    attenuation_target_db: float
    attenuation_db: float


@dataclass(frozen=True)
class Verdict:
    """Does the design achieve what it promised, and where does the monopole model hold.

    ``outcome``: PASS, FAIL or NOT RESOLVED; ``judged_by``: "attenuation"
    (with control sources) or "field"; ``first_departure_hz`` and
    ``reason``: the first sure departure (None unless FAIL).
    ``attenuation`` is None without control sources; ``decomposition`` None
    when the sources were not solved with their own bodies alone.

    Examples
    --------
    >>> v = Verdict("PASS", "field", None, None, JudgedTolerance(1.0, 15.0, 10.0, 3.0), (100.0,), (), None, None, ())
    >>> v.passed
    True
    """

    outcome: str
    judged_by: str
    first_departure_hz: float | None
    reason: str | None
    tolerance: JudgedTolerance
    frequencies_hz: tuple
    sectors: tuple
    attenuation: AttenuationJudgement | None
    decomposition: tuple | None
    rules_of_thumb: tuple

    @property
    def passed(self):
        """True when the outcome is PASS."""
        return self.outcome == PASS
