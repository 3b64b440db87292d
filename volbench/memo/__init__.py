"""The vol memo: what it says (:mod:`volbench.memo.content`, Qt-free); the PDF is drawn by
:mod:`volbench.gui.memo_pdf`."""

from volbench.memo.content import CAUTION, Memo, Section, Table, build_memo, memo_settings

__all__ = ["CAUTION", "Memo", "Section", "Table", "build_memo", "memo_settings"]
