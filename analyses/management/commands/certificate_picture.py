"""Draw page 1 of a certificate of analysis as a PNG: the README's picture, or a look at a real one.

    python manage.py certificate_picture                      # the invented example -> docs/certificate-page1.png
    python manage.py certificate_picture --lot MV-RSO-2401 --output /tmp/page1.png

Needs pdftoppm (poppler-utils: ``apt-get install poppler-utils``)."""
from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

from django.conf import settings
from django.core.management.base import BaseCommand, CommandError

DEFAULT_OUTPUT = Path(settings.BASE_DIR) / "docs" / "certificate-page1.png"


class Command(BaseCommand):
    help = "Render page 1 of a certificate of analysis to a PNG (default: the invented example, for the README)."

    def add_arguments(self, parser):
        parser.add_argument("--lot", help="code of a released lot; left out, the invented example certificate")
        parser.add_argument("--certificate-version", type=int, dest="certificate_version", help="certificate version (default: the current one)")
        parser.add_argument("--output", default=str(DEFAULT_OUTPUT), help=f"PNG to write (default {DEFAULT_OUTPUT})")
        parser.add_argument("--resolution", type=int, default=80, help="dots per inch (default 80)")

    def handle(self, *args, lot=None, certificate_version=None, output, resolution, **options):
        from analyses.documents.certificate_pdf import certificate_pdf

        if shutil.which("pdftoppm") is None:
            raise CommandError("pdftoppm is not installed (apt-get install poppler-utils)")
        content, replaced_by = self._content(lot, certificate_version)
        target = Path(output)
        target.parent.mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryDirectory() as work:
            pdf = Path(work) / "certificate.pdf"
            pdf.write_bytes(certificate_pdf(content, replaced_by=replaced_by))
            stem = Path(work) / "page1"
            subprocess.run(
                ["pdftoppm", "-png", "-r", str(resolution), "-f", "1", "-l", "1", "-singlefile", str(pdf), str(stem)],
                check=True, capture_output=True,
            )
            shutil.copyfile(stem.with_suffix(".png"), target)
        self.stdout.write(f"page 1 of certificate {content['certificate_number']} written to {target}")

    def _content(self, lot_code: str | None, version: int | None):
        if lot_code is None:
            from analyses.documents.certificate_example import example_certificate_content

            return example_certificate_content(), None
        from analyses.errors import NotFound
        from analyses.models import Lot
        from analyses.selectors.api_lots import certificate_of_lot

        lot = Lot.objects.filter(code=lot_code).first()
        if lot is None:
            raise CommandError(f"no lot {lot_code!r}")
        try:
            certificate = certificate_of_lot(lot.pk, version)
        except NotFound as missing:
            raise CommandError(missing.detail) from None
        newer = getattr(certificate, "replaced_by", None)
        return certificate.content, newer.number if newer is not None else None
