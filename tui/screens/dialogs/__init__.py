"""Small modal questions, one module each: a file name, a choice between a few
answers, the safety note, the report export."""

from .ask_choice import AskChoice
from .ask_text import AskText
from .base import AnswerDialog, ButtonRow, DialogButton
from .export_report import ExportReport
from .paths import check_new_site_path, check_report_path, check_site_path, names_a_file, new_site_path, site_file_in
from .safety_note import SafetyNote

__all__ = ["AnswerDialog", "AskChoice", "AskText", "ButtonRow", "DialogButton", "ExportReport", "SafetyNote",
           "check_new_site_path", "check_report_path", "check_site_path", "names_a_file", "new_site_path",
           "site_file_in"]
