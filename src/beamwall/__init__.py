"""beamwall: a torch's beam measured from calibrated photos of it on a wall."""

__version__ = "0.1.0"
