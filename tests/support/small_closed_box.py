"""A closed-box loudspeaker written out in Small's normalised form, independently of bemcheck.

R. H. Small, "Closed-box loudspeaker systems, Part I: Analysis", J. Audio
Eng. Soc. 20(10), 798-808, 1972: the cone with the box's air spring is a
second-order mechanical system of resonance ωc and quality factor Qmc,

    Zm(s) = Mms (s² + s ωc/Qmc + ωc²) / s,
    ωc² = 1/(Mms Cmt),  1/Cmt = 1/Cms + ρc²Sd²/Vb  (box air spring),  Qmc = ωc Mms/Rms,

and the voice-coil impedance is Re + s Le plus the motional impedance

    Zmot(s) = (Bl²/Rms) (s/(Qmc ωc)) / (s²/ωc² + s/(Qmc ωc) + 1).

Small writes them with the Laplace variable s for exp(st) time dependence;
bemcheck's exp(-iωt) is s = -iω.  Volume velocity U = Sd u, force Bl I = Zm u.
Amplitudes are peak values.
"""

import numpy as np


def small_drive(driver, frequency, volume_velocity, density, speed_of_sound):
    """Peak voltage and current [V, A] (complex) for a peak volume velocity [m³/s] at ``frequency`` [Hz]."""
    s = -2j * np.pi * np.asarray(frequency, dtype=float)
    cmt = 1.0 / (1.0 / driver.cms + density * speed_of_sound**2 * driver.sd**2 / driver.vb)
    wc = 1.0 / np.sqrt(driver.mms * cmt)
    qmc = wc * driver.mms / driver.rms
    u = np.asarray(volume_velocity, dtype=complex) / driver.sd
    current = driver.mms * (s**2 + s * wc / qmc + wc**2) / s * u / driver.bl
    motional = (driver.bl**2 / driver.rms) * (s / (qmc * wc)) / (s**2 / wc**2 + s / (qmc * wc) + 1.0)
    voltage = current * (driver.re + s * driver.le + motional)
    return voltage, current
