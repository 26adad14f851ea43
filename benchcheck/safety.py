"""The laser-safety caution shown wherever benchcheck reports power, irradiance or blocked light."""

__all__ = ["LASER_SAFETY_CAUTION"]

LASER_SAFETY_CAUTION = (
    "Laser safety: laser light can blind and burn, directly or by reflection. The power, "
    "irradiance and blocked-light figures here are planning estimates, not safety data. "
    "Follow your local rules and your site's laser safety officer; terminate every blocked "
    "beam on a rated beam dump."
)
