"""Package exceptions and warnings.

Every message names the file, the key or line, the offending value and what was
expected, so that the command line can print it as one ``Error: ...`` line.
"""


class SiteExposureError(Exception):
    """Base class of every error the package raises on purpose."""


class InputError(SiteExposureError):
    """A site file, option or value that cannot be used as given."""


class PatternError(InputError):
    """An antenna pattern file or parametric pattern that is malformed."""


class LimitsError(SiteExposureError):
    """A limit set, population or frequency that the limit tables do not cover."""


class OutputError(SiteExposureError):
    """An output path that cannot be written."""


class SiteExposureWarning(UserWarning):
    """A soft problem; the message says how to fix it."""
