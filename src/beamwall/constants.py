"""Named constants, each with its unit and source.

References
----------
.. [FL1] ANSI/PLATO FL 1-2019, *Flashlight Basic Performance Standard* (earlier ANSI/NEMA
   FL 1-2009), section 1.2.1 "Beam distance", as reproduced by secondary sources: the distance
   at which the illuminance from the peak beam intensity falls to 0.25 lx.
.. [BT709] ITU-R Recommendation BT.709-6 (2015), *Parameter values for the HDTV standards*,
   item 3.2: luminance Y = 0.2126 R + 0.7152 G + 0.0722 B on linear RGB.
.. [IEC61966] IEC 61966-2-1:1999, *Multimedia systems and equipment - Colour measurement and
   management - Part 2-1: Default RGB colour space - sRGB*.
.. [SI] BIPM, *The International System of Units*, 9th edition (2019): the candela fixes the
   luminous efficacy of 540 THz radiation at 683 lm/W.
"""

from __future__ import annotations

__all__ = [
    "THROW_ILLUMINANCE_LX",
    "BEAM_LEVEL_FRACTION",
    "FIELD_LEVEL_FRACTION",
    "REC709_LUMINANCE_WEIGHTS",
    "MAX_LUMINOUS_EFFICACY_LM_PER_W",
    "FULL_FRAME_DIAGONAL_MM",
    "REFERENCE_ISO",
]

#: Illuminance defining a torch's beam distance ("throw"), lux [FL1].
THROW_ILLUMINANCE_LX: float = 0.25

#: Intensity level, as a fraction of the peak, that bounds the beam angle (IES definition of
#: beam angle, 50 % of maximum intensity).
BEAM_LEVEL_FRACTION: float = 0.5

#: Intensity level, as a fraction of the peak, that bounds the field angle (IES definition of
#: field angle, 10 % of maximum intensity).
FIELD_LEVEL_FRACTION: float = 0.1

#: Weights of linear R, G, B in luminance [BT709] (the sRGB primaries of [IEC61966]).
REC709_LUMINANCE_WEIGHTS: tuple[float, float, float] = (0.2126, 0.7152, 0.0722)

#: Highest possible luminous efficacy of radiation, lm/W, at 540 THz (555 nm) [SI].
MAX_LUMINOUS_EFFICACY_LM_PER_W: float = 683.0

#: Diagonal of the 36 mm x 24 mm "35 mm" frame, mm, used to turn a 35 mm-equivalent focal
#: length into pixels (sqrt(36^2 + 24^2)); scaling by the diagonal is common practice, no
#: source.
FULL_FRAME_DIAGONAL_MM: float = 43.266615305567875

#: ISO speed at which exposure normalisation has unit gain (an arbitrary, fixed choice).
REFERENCE_ISO: float = 100.0
