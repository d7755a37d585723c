"""The validated accuracy of the field models, as the report's method section quotes it.

Data copied from ``tests/data/nec/accuracy.md``, the table that the method-of-moments
validation (PyNEC reference cases, ``tests/validation/nec_accuracy.py``) writes; the
end-to-end tests check that this copy and that file agree row for row, so a regenerated
table that changes a figure fails the tests until this copy is updated.

Each row of :data:`E_FIELD` and :data:`POYNTING` is (model and region, points judged,
points assessed, median, 5th percentile, 95th percentile, minimum and maximum error in dB
(model minus reference), share of assessed points within -1.5..+3 dB). The two tables
differ in the reference quantity: the plane-wave equivalent of the E field
(|E_rms|^2 / eta0) and the magnitude of the time-averaged Poynting vector.

The aperture (dish) model is not part of this validation.
"""

from __future__ import annotations

#: where the copied table comes from (relative to the project root)
SOURCE = "tests/data/nec/accuracy.md"
SUMMARY = (
    "Error = model minus reference (method-of-moments solution, PyNEC), in dB. Each model "
    "got only the solver's far-field cuts as a pattern file, the aperture size and the input "
    "power. Judged: points within 20 dB of the strongest reference value at the same range; "
    "assessed: judged points the model did not flag as not assessable. Regions by distance "
    "from the radiation centre: lambda/2..lambda; radiating near field lambda..R_ff; far field "
    "beyond R_ff = max(2 L^2/lambda, 3 lambda, 5 L). Free space, no ground."
)

#: reference cases: (case, frequency, aperture H x W, peak gain, Prad/Pin, R_ff)
CASES = (
    ('dipole: vertical half-wave dipole in free space', '146 MHz', '0.50 x 0.00 lambda', '2.16 dBi', '0.9992', '3.0 lambda',),
    ('collinear: vertical collinear array: 4 half-wave dipoles, centre spacing 0.8 lambda, each fed with 1 V at 0 deg', '450 MHz', '2.90 x 0.00 lambda', '8.13 dBi', '0.9991', '16.8 lambda',),
    ('panel: panel: 8 vertical dipoles (0.47 lambda, spacing 0.8 lambda) 0.25 lambda in front of a 1.0 lambda wide wire-grid reflector; electrical downtilt 0 deg by feed phase progression', '1900 MHz', '6.60 x 1.00 lambda', '15.99 dBi', '0.9967', '87.1 lambda',),
    ('panel_tilt6: panel: 8 vertical dipoles (0.47 lambda, spacing 0.8 lambda) 0.25 lambda in front of a 1.0 lambda wide wire-grid reflector; electrical downtilt 6 deg by feed phase progression', '1900 MHz', '6.60 x 1.00 lambda', '16.07 dBi', '0.9968', '87.1 lambda',),
)

#: reference |E_rms|^2 / eta0 (plane-wave equivalent of the E field)
E_FIELD = (
    ('far-field (far-field-friis), lambda/2..lambda', '10081', '3690', '+0.62', '-0.47', '+1.00', '-56.54', '+2.06', '97.8 %',),
    ('far-field (far-field-friis), radiating near field', '25174', '13586', '+0.63', '-4.01', '+6.80', '-48.49', '+10.59', '67.9 %',),
    ('far-field (far-field-friis), far field', '6034', '6034', '+0.32', '-0.60', '+8.78', '-7.24', '+13.29', '74.9 %',),
    ('cylindrical (oet65-cylindrical), lambda/2..lambda', '10081', '3690', '+0.94', '+0.37', '+3.05', '-50.52', '+4.30', '94.5 %',),
    ('cylindrical (oet65-cylindrical), radiating near field', '25174', '13586', '+0.59', '-3.59', '+7.45', '-45.99', '+11.69', '66.1 %',),
    ('cylindrical (oet65-cylindrical), far field', '6034', '6034', '+0.42', '-0.54', '+8.92', '-7.22', '+13.43', '74.1 %',),
    ('array (array-synthesis), lambda/2..lambda', '10081', '3690', '+0.01', '-0.01', '+0.01', '-0.05', '+0.01', '100.0 %',),
    ('array (array-synthesis), radiating near field', '25174', '13586', '+0.01', '-0.47', '+0.30', '-2.44', '+4.42', '99.8 %',),
    ('array (array-synthesis), far field', '6034', '6034', '+0.01', '-0.29', '+0.04', '-1.48', '+1.71', '100.0 %',),
    ('auto (array-synthesis), lambda/2..lambda', '10081', '3690', '+0.01', '-0.01', '+0.01', '-0.05', '+0.01', '100.0 %',),
    ('auto (array-synthesis), radiating near field', '25174', '13586', '+0.01', '-0.47', '+0.30', '-2.44', '+4.42', '99.8 %',),
    ('auto (array-synthesis), far field', '6034', '6034', '+0.01', '-0.29', '+0.04', '-1.48', '+1.71', '100.0 %',),
)

#: `auto` per reference case (all regions)
AUTO_BY_CASE = (
    ('dipole (array-synthesis)', '12968', '12968', '+0.01', '-0.00', '+0.01', '-0.05', '+0.01', '100.0 %',),
    ('collinear (array-synthesis)', '11986', '5472', '+0.02', '-0.70', '+0.18', '-0.97', '+0.21', '100.0 %',),
    ('panel (array-synthesis)', '8264', '2488', '-0.14', '-0.70', '+0.33', '-1.48', '+1.39', '100.0 %',),
    ('panel_tilt6 (array-synthesis)', '8071', '2382', '-0.05', '-0.65', '+1.38', '-2.44', '+4.42', '98.6 %',),
)

#: reference: magnitude of the time-averaged Poynting vector
POYNTING = (
    ('far-field (far-field-friis), lambda/2..lambda', '10081', '3676', '+0.47', '+0.18', '+2.28', '-1.66', '+3.52', '97.9 %',),
    ('far-field (far-field-friis), radiating near field', '25174', '13568', '+0.63', '-3.96', '+6.88', '-42.01', '+10.66', '66.8 %',),
    ('far-field (far-field-friis), far field', '6034', '6034', '+0.32', '-0.59', '+8.82', '-7.24', '+13.33', '74.9 %',),
    ('cylindrical (oet65-cylindrical), lambda/2..lambda', '10081', '3676', '+0.67', '+0.22', '+5.43', '+0.15', '+6.54', '86.7 %',),
    ('cylindrical (oet65-cylindrical), radiating near field', '25174', '13568', '+0.57', '-3.44', '+7.60', '-41.71', '+11.88', '65.3 %',),
    ('cylindrical (oet65-cylindrical), far field', '6034', '6034', '+0.42', '-0.54', '+8.94', '-7.22', '+13.48', '74.1 %',),
    ('array (array-synthesis), lambda/2..lambda', '10081', '3676', '-0.15', '-0.45', '+2.11', '-0.47', '+3.42', '98.7 %',),
    ('array (array-synthesis), radiating near field', '25174', '13568', '-0.01', '-0.42', '+0.55', '-2.49', '+4.34', '99.8 %',),
    ('array (array-synthesis), far field', '6034', '6034', '+0.00', '-0.28', '+0.14', '-1.46', '+1.70', '100.0 %',),
    ('auto (array-synthesis), lambda/2..lambda', '10081', '3676', '-0.15', '-0.45', '+2.11', '-0.47', '+3.42', '98.7 %',),
    ('auto (array-synthesis), radiating near field', '25174', '13568', '-0.01', '-0.42', '+0.55', '-2.49', '+4.34', '99.8 %',),
    ('auto (array-synthesis), far field', '6034', '6034', '+0.00', '-0.28', '+0.14', '-1.46', '+1.70', '100.0 %',),
)

#: model ids of the package that the validation covers (the rest: "not validated")
VALIDATED_MODEL_IDS = ("far-field-friis", "oet65-cylindrical", "array-synthesis")


def rows_for(model_id: str, table: tuple = E_FIELD) -> list[tuple]:
    """The rows of ``table`` that concern ``model_id`` (``auto`` rows excluded)."""
    return [r for r in table if r[0].split(",")[0].endswith(f"({model_id})")
            and not r[0].startswith("auto")]
