"""Printed reports (PDF): the notice board and the handicap card."""
from secretary.report.handicap import write_handicap_pdf
from secretary.report.notice import write_notice_pdf

__all__ = ["write_handicap_pdf", "write_notice_pdf"]
