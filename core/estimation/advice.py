"""What limits a reading, as stable short codes with plain words and a fix.

Codes are part of the JSON output and the firing log: keep them stable; reword freely.
"""

from __future__ import annotations

from dataclasses import dataclass

CLIPPED_SHARE_WARN = 0.02  # warn when more than 2 % of the region is blown out
FEW_PIXELS = 200  # fewer usable pixels than this is a thin sample
BACKGROUND_LEVEL_WARN = 0.01  # surroundings' weakest channel above 1 % of the glow's red
# (rendered daylight at a tenth of the glow's luminance reached 1.3 % and shifted green/red by +0.01)
# Visible glow starts at the Draper point: J. W. Draper, Phil. Mag. 30 (1847) 345, found every
# solid begins to glow at 977 °F, which is the figure used here (525 °C). Howe's heat-colour
# table (glowtemp.estimation.scales) sees a first red at 470 °C, but only with eyes adapted to the dark.
BELOW_GLOW_C = 525.0


@dataclass(frozen=True)
class Advice:
    code: str
    message: str
    fix: str

    def to_dict(self) -> dict:
        return {"code": self.code, "message": self.message, "fix": self.fix}


def clipped_pixels(share: float) -> Advice:
    return Advice(
        "clipped-pixels",
        f"{share:.0%} of the region is blown out (a colour channel at full scale); those pixels "
        "were left out, and the rest may still read hot.",
        "Lower the exposure (drag the camera's brightness down, or set -1 to -2 EV) until the "
        "glow shows colour rather than white.",
    )


def auto_white_balance() -> Advice:
    return Advice(
        "auto-white-balance",
        "The camera set its white balance automatically, which pulls glow towards white and "
        "makes it read hotter than it is.",
        "Lock the white balance to a daylight preset (about 5500 K) before taking the photo.",
    )


def few_pixels(count: int) -> Advice:
    return Advice(
        "few-pixels",
        f"Only {count} pixels carry usable colour, so the estimate rests on a thin sample.",
        "Move closer, zoom in, or make the region cover more of the glowing surface.",
    )


def no_usable_pixels() -> Advice:
    return Advice(
        "no-usable-pixels",
        "No pixel in the region carries usable colour: they are all blown out or too dark.",
        "Retake the photo with the exposure set so the glow is clearly coloured, then choose "
        "the glowing area as the region.",
    )


def too_dark() -> Advice:
    return Advice(
        "too-dark",
        "Most of the region is too dim to carry colour.",
        "Raise the exposure until the glow is clearly coloured but not blown out, or move the "
        "region onto the glowing surface.",
    )


def not_glow_colour() -> Advice:
    return Advice(
        "not-glow-colour",
        "This colour is far from the glow of any hot body: a flame, an LED or lamp, or mixed or "
        "reflected light.",
        "Aim at the glowing surface itself, keep flames out of the region, and turn off nearby "
        "lights.",
    )


def ambiguous() -> Advice:
    return Advice(
        "ambiguous-colour",
        "The photo fits two separate temperatures (cameras differ in how they record this "
        "colour), so only the range that holds both is given.",
        "Keep the exposure data with the photo, lock a daylight white balance, or make a camera "
        "profile from a thermocouple or cone reading.",
    )


def wide_range() -> Advice:
    return Advice(
        "wide-range",
        "The photo narrows the heat only to a wide range, so no single temperature is given.",
        "Lock the white balance to daylight, lower the exposure until the glow shows colour, and "
        "fill the region with glow; a camera profile narrows it further.",
    )


def ambient_light() -> Advice:
    return Advice(
        "ambient-light",
        "The surroundings are brightly lit. Light reflected off the work adds green and blue and "
        "makes it read hot.",
        "Shade the work or dim the lights, or photograph through the spy hole.",
    )


def colour_floor(space_name: str, ceiling_c: float) -> Advice:
    return Advice(
        "below-colour-range",
        f"At this heat glow is redder than {space_name} can record, so the photo's colour only "
        f"shows that the glow is below about {ceiling_c:.0f} °C.",
        "Save photos in Display P3 (a wide-colour setting on many phones) or raw, or compare "
        "with a thermocouple or witness cones.",
    )


def below_glow() -> Advice:
    return Advice(
        "below-visible-glow",
        f"The estimate is below about {BELOW_GLOW_C:.0f} °C, where hot bodies hardly glow; what "
        "the camera sees may be reflected light.",
        "Check the reading with a thermocouple; do not trust glow colour at this heat.",
    )


def daylight_or_lamp() -> Advice:
    return Advice(
        "daylight-or-lamp",
        "This looks like daylight or lamp light, not glow: its colour is whiter than anything "
        "glowing in a kiln or forge (work here tops out near 1600 °C).",
        "Photograph the glowing work itself, in a dim shop or through the spy hole, and draw the "
        "region on the glow.",
    )


def colour_only(reason: str) -> Advice:
    return Advice(
        "colour-only",
        f"Read from colour alone: {reason}, so brightness could not help.",
        "Send the photo as the camera saved it (no editing app, no HDR or night mode), so its "
        "exposure time, f-number and ISO stay with it.",
    )


def channels_disagree() -> Advice:
    return Advice(
        "channels-disagree",
        "Colour and brightness point to different heats, so the range given holds both. The "
        "exposure data may not describe these pixels (HDR, night mode, a filter or a dirty "
        "window), the scene kind may be wrong, or the surface is not a grey body.",
        "Turn off HDR and night modes, check the scene kind chosen for this photo, and compare "
        "with a thermocouple.",
    )


def colour_profile_problem(problem: str) -> Advice:
    return Advice(
        "colour-profile-unread",
        f"The photo's colour profile could not be read ({problem}); sRGB was assumed.",
        "Export the photo as an ordinary sRGB or Display P3 JPEG.",
    )


def raw_calibration_unstated() -> Advice:
    return Advice(
        "raw-calibration-unstated",
        "This raw file's colour matrix does not say under which light it was measured, so "
        "glowtemp took it as daylight (D65); a daylight matrix reads glow a little greener, and "
        "so hotter, than one measured under lamp light.",
        "Make a camera profile from raw photos of this camera with trusted readings "
        "(thermocouple or witness cones).",
    )


def incomplete_image() -> Advice:
    return Advice(
        "incomplete-image",
        "Part of the photo's image data is missing (the file was cut short and the decoder "
        "filled the rest with grey); the region may hold pixels that were never recorded.",
        "Copy or send the original photo again, and check that the whole picture shows.",
    )


def outside_profile_span(span_c) -> Advice:
    return Advice(
        "outside-profile-span",
        f"This reading lies outside the {span_c[0]:.0f}-{span_c[1]:.0f} °C span of the profile's "
        "trusted readings, so its band has been widened.",
        "Add a photo with a trusted reading near this heat to the profile.",
    )


def profile_camera_mismatch(made_with, taken_with) -> Advice:
    def said(settings):
        model, white_balance = settings
        return f"{model or 'an unnamed camera'} ({white_balance or 'unknown'} white balance)"

    return Advice(
        "profile-camera-mismatch",
        f"The profile was made with {said(made_with)}, but this photo comes from "
        f"{said(taken_with)}; the correction may not carry over, so the band has been widened.",
        "Choose the profile made with this camera and setting, or make one for it.",
    )


def profile_space_mismatch(profile_space, photo_space) -> Advice:
    return Advice(
        "profile-not-applied",
        f"The profile was made from {profile_space} photos and this photo is {photo_space}, so the "
        "profile was not applied and the uncalibrated band is shown.",
        "Use the same colour setting as the profile's photos, or make a profile for this one.",
    )
