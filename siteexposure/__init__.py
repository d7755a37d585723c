"""siteexposure: screening estimates of RF exposure around antenna sites.

Results are screening estimates, not measurements; local regulations govern and a
licensed professional must review them before anyone relies on them.
"""

__version__ = "0.1.0"

from siteexposure.errors import SiteExposureError  # noqa: E402

__all__ = ["__version__", "SiteExposureError"]
