"""The oleotrace Django project: settings, URLs, the Celery app and the API root."""
from labcore.celery import app as celery_app

__all__ = ("celery_app",)
