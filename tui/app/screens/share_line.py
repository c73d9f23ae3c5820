"""The bootstrap selection shares on the column screen: the line under the candidate table
and the worker that computes them (a hook the column screen mixes in)."""

from __future__ import annotations

from textual import work
from textual.worker import get_current_worker

from tui.app.fit_cache import ColumnFits, FitRequest
from tui.app.messages import SharesReady
from tui.app.widgets.forms_table import FormsTable, form_text
from tui.app.widgets.line import Line
from tui.engine.score_words import SURVEY_LR_NOTE
from tui.engine.stability import DEFAULT_RESAMPLES, SelectionShares
from tui.intake.weights import SURVEY
from tui.table_rules import LR_DASH


def share_line(fits: ColumnFits, shares: SelectionShares | None, pending: bool = False) -> str:
    """e.g. ``quadratic lowest AIC in 78% of 200 resamples, spline, 4 knots 19%``, then
    what a dash in the LR p column means."""
    if pending:
        text = f"bootstrap shares: resampling {DEFAULT_RESAMPLES} times…"
    elif shares is None:
        text = "bootstrap shares: not computed for adjusted fits"
    else:
        rows = fits.table.rows if fits.table is not None else ()
        text = "shares: " + shares.leaders({r.key: form_text(r) for r in rows})
        text += f" (seed {shares.seed})"
    if fits.request.basis.weight_kind == SURVEY:
        text += f" · {SURVEY_LR_NOTE}"
    return f"{text} · {LR_DASH}"


class SharesHook:
    """What the column screen needs for the shares; mixed into ``InspectScreen``."""

    fits: ColumnFits | None
    shares: SelectionShares | None

    def compute_shares(self, request: FitRequest) -> None:
        """Bootstrap selection shares of the request (in a worker thread: slow)."""
        shares = self.cache.shares(request)  # type: ignore[attr-defined]
        if not get_current_worker().is_cancelled:
            self.post_message(SharesReady(request, shares))  # type: ignore[attr-defined]

    @work(thread=True, exclusive=True, group="shares", exit_on_error=False)
    def shares_worker(self, request: FitRequest) -> None:
        """Shares of fits that came from the cache."""
        self.compute_shares(request)

    def on_shares_ready(self, message: SharesReady) -> None:
        if self.fits is not None and message.request == self.fits.request:
            self.shares = message.shares
            self.show_shares()

    def fit_worker_running(self) -> bool:
        """A fit worker runs (it computes the shares itself after the fits)."""
        return any(w.group == "fits" and w.is_running for w in self.workers)  # type: ignore[attr-defined]

    def show_shares(self) -> None:
        """Redraw the table's share column and the shares line."""
        fits = self.fits
        if fits is None:
            return
        table = self.query_one(FormsTable)  # type: ignore[attr-defined]
        key = table.highlighted_key()
        table.show(fits, self._accepted(), self.shares)  # type: ignore[attr-defined]
        if key is not None:
            table.move_to_key(key)
        self.query_one("#shares", Line).update(share_line(fits, self.shares))  # type: ignore[attr-defined]
