"""Getting tiles off the UI thread: a worker thread with Qt's network stack or an archive reader
(the tile's bytes are decoded into an image on the UI thread).

The layer says which tiles it wants (newest wish replaces older ones); the worker answers each with
an image or with "absent", and reports one status line. For web tiles:

* a ``QNetworkDiskCache`` in the per-user cache folder, bounded, used the HTTP way (fresh entries
  are served without asking, stale ones revalidated: the server's cache headers decide);
* at most :data:`PER_HOST` requests in flight per host, and a User-Agent naming the program;
* when the server cannot be reached, the tile is looked up in the cache only, the host is left alone
  for a back-off delay that doubles on every failed probe (:data:`FIRST_BACKOFF_S` up to
  :data:`MAX_BACKOFF_S`), and meanwhile every request is answered from the cache only.
"""
from __future__ import annotations

import threading
from collections import defaultdict
from pathlib import Path

from PySide6 import QtCore, QtGui, QtNetwork

from ... import __version__
from ...tiles.archives import ArchiveError, MBTilesArchive, PMTilesArchive, open_archive
from ...tiles.templates import TileTemplate

#: Requests in flight per host (the tile usage policies of public servers ask for few).
PER_HOST = 2
FIRST_BACKOFF_S = 2.0
MAX_BACKOFF_S = 300.0
#: A request that has not finished in this time counts as a failure.
TIMEOUT_MS = 15000
USER_AGENT = f"Trackwright/{__version__} (GPS track editor; map background)"

TileKey = tuple[int, int, int]  # (z, x wrapped into the world, y)

Error = QtNetwork.QNetworkReply.NetworkError
#: HTTP answers meaning "this tile does not exist" (not a failing server).
ABSENT_STATUS = {204, 400, 401, 403, 404, 410}


def decode(data: bytes) -> QtGui.QImage | None:
    """Tile bytes to an image ready to draw, or ``None`` when they are not an image Qt can read."""
    image = QtGui.QImage.fromData(data)
    if image.isNull():
        return None
    return image.convertToFormat(QtGui.QImage.Format.Format_ARGB32_Premultiplied)


class TileWorker(QtCore.QObject):
    """Lives on the loader's thread; talks to the layer only by signals.

    It hands over the tile's bytes, never an image: decoding with Qt on this thread (``QImage``)
    takes Qt's object locks while holding Python's lock, which deadlocked against the UI thread
    destroying a widget. The loader decodes on the UI thread.
    """

    tile_bytes = QtCore.Signal(object, bytes)
    tile_absent = QtCore.Signal(object)
    status_changed = QtCore.Signal(str)

    def __init__(self) -> None:
        super().__init__()
        self._queue: list[TileKey] = []
        self._status = ""
        self._wish_lock = threading.Lock()
        self._wish: list[TileKey] | None = None

    def post_wish(self, keys: list[TileKey]) -> None:
        """Called from the UI thread: the tiles now wanted, most wanted first (replaces older wishes)."""
        with self._wish_lock:
            self._wish = keys

    @QtCore.Slot()
    def take_wish(self) -> None:
        with self._wish_lock:
            wish, self._wish = self._wish, None
        if wish is not None:
            self._queue = [(int(k[0]), int(k[1]), int(k[2])) for k in wish]
            self._pump()

    @QtCore.Slot()
    def start(self) -> None:
        raise NotImplementedError

    def _pump(self) -> None:
        raise NotImplementedError

    @QtCore.Slot()
    def stop(self) -> None:
        self._queue = []

    def _set_status(self, text: str) -> None:
        if text != self._status:
            self._status = text
            self.status_changed.emit(text)


class WebWorker(TileWorker):
    """Fetches ``template`` tiles through a disk cache of ``cache_bytes`` in ``cache_dir``."""

    def __init__(self, template: TileTemplate, cache_dir: Path, cache_bytes: int, high_dpi: bool) -> None:
        super().__init__()
        self.template = template
        self.cache_dir = cache_dir
        self.cache_bytes = cache_bytes
        self.high_dpi = high_dpi
        self._nam: QtNetwork.QNetworkAccessManager | None = None
        self._in_flight: dict[str, int] = defaultdict(int)
        self._pending: dict[TileKey, QtNetwork.QNetworkReply] = {}
        self._asked: dict[QtNetwork.QNetworkReply, tuple[TileKey, bool, str, bool]] = {}
        self._cache_only_tried: set[TileKey] = set()
        self._waiting: set[TileKey] = set()  # failed online: asked again when the server is back
        self._offline = False
        self._backoff_s = 0.0
        self._probe_due = False
        self._timer = QtCore.QTimer(self, singleShot=True)  # moves to the worker thread with its parent
        self._timer.timeout.connect(self._probe)

    @QtCore.Slot()
    def start(self) -> None:
        self._nam = QtNetwork.QNetworkAccessManager(self)
        cache = QtNetwork.QNetworkDiskCache(self._nam)
        self.cache_dir.mkdir(parents=True, exist_ok=True)
        cache.setCacheDirectory(str(self.cache_dir))
        cache.setMaximumCacheSize(self.cache_bytes)
        self._nam.setCache(cache)
        self._nam.setTransferTimeout(TIMEOUT_MS)
        # One connection for every reply, made here once: connecting per reply from this thread took
        # Qt's connection lock while holding the GIL, and deadlocked against the UI thread destroying
        # an object (which holds that lock and waits for the GIL).
        self._nam.finished.connect(self._reply_finished)

    def _pump(self) -> None:
        if self._nam is None:
            return
        still = []
        for key in self._queue:
            if key in self._pending:
                continue
            if self._in_flight[self.template.host] >= PER_HOST:
                still.append(key)
            elif not self._offline:
                self._request(key, cache_only=False)
            elif self._probe_due:
                self._probe_due = False  # one request asks whether the server is back
                self._request(key, cache_only=False, probe=True)
            elif key in self._cache_only_tried:
                self._waiting.add(key)
            else:
                self._request(key, cache_only=True)
        self._queue = still

    def _request(self, key: TileKey, cache_only: bool, probe: bool = False) -> None:
        z, x, y = key
        request = QtNetwork.QNetworkRequest(QtCore.QUrl(self.template.tile_url(z, x, y, self.high_dpi)))
        request.setHeader(QtNetwork.QNetworkRequest.KnownHeaders.UserAgentHeader, USER_AGENT)
        control = QtNetwork.QNetworkRequest.CacheLoadControl
        request.setAttribute(QtNetwork.QNetworkRequest.Attribute.CacheLoadControlAttribute,
                             control.AlwaysCache if cache_only else control.PreferCache)
        if cache_only:
            self._cache_only_tried.add(key)
        assert self._nam is not None  # started
        reply = self._nam.get(request)
        host = self.template.host
        self._in_flight[host] += 1
        self._pending[key] = reply
        self._asked[reply] = (key, cache_only, host, probe)

    def _reply_finished(self, reply: QtNetwork.QNetworkReply) -> None:
        asked = self._asked.pop(reply, None)
        if asked is not None:
            key, cache_only, host, probe = asked
            self._finished(key, reply, cache_only, host, probe)

    def _finished(self, key: TileKey, reply: QtNetwork.QNetworkReply, cache_only: bool, host: str,
                  probe: bool) -> None:
        self._in_flight[host] -= 1
        self._pending.pop(key, None)
        error = reply.error()
        status = reply.attribute(QtNetwork.QNetworkRequest.Attribute.HttpStatusCodeAttribute)
        data = bytes(reply.readAll().data()) if error == Error.NoError else b""
        reply.deleteLater()
        if error == Error.OperationCanceledError:
            pass
        elif error == Error.NoError and status in (None, 200, 203, 304):
            self.tile_bytes.emit(key, data)
            if not cache_only:
                self._back_online()
        elif status in ABSENT_STATUS:
            self.tile_absent.emit(key)
            if status in (401, 403):
                self._set_status(f"Map background: {self.template.host} refused the tiles (HTTP {status}); "
                                 "check the key in View ▸ Background ▸ Web map")
            if not cache_only:
                self._back_online()
        elif cache_only:
            self._waiting.add(key)  # not saved: blank until the server answers again
        else:
            self._went_offline(probe)
            self._request(key, cache_only=True)  # a saved copy, however old, beats a blank
        self._pump()

    def _went_offline(self, probe: bool) -> None:
        if self._offline and not probe:
            return  # a request sent before the first failure: the back-off already runs
        self._backoff_s = FIRST_BACKOFF_S if not self._offline else min(self._backoff_s * 2, MAX_BACKOFF_S)
        self._offline = True
        self._probe_due = False
        self._timer.start(int(self._backoff_s * 1000))
        self._set_status(f"Map background offline ({self.template.host}): showing saved tiles, "
                         f"trying again in {self._backoff_s:.0f} s")

    def _back_online(self) -> None:
        if not self._offline:
            return
        self._offline = False
        self._backoff_s = 0.0
        self._timer.stop()
        self._set_status("")
        retry, self._waiting = self._waiting, set()
        self._cache_only_tried.clear()
        self._queue = [k for k in self._queue if k not in retry] + sorted(retry)

    def _probe(self) -> None:
        self._probe_due = True
        if not self._queue and self._waiting:
            self._queue = sorted(self._waiting)
            self._waiting.clear()
        self._pump()

    @QtCore.Slot()
    def stop(self) -> None:
        super().stop()
        self._timer.stop()
        for reply in list(self._pending.values()):
            reply.abort()
        self._pending.clear()
        if self._nam is not None:
            self._nam.deleteLater()
            self._nam = None


class ArchiveWorker(TileWorker):
    """Reads tiles from an MBTiles or PMTiles file, one per event-loop turn (a newer wish wins)."""

    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path
        self._archive: MBTilesArchive | PMTilesArchive | None = None
        self._timer = QtCore.QTimer(self, singleShot=True, interval=0)
        self._timer.timeout.connect(self._next)

    @QtCore.Slot()
    def start(self) -> None:
        try:
            self._archive = open_archive(self.path)
        except ArchiveError as err:
            self._set_status(f"Map background unavailable: {err}")

    def _pump(self) -> None:
        if self._archive is not None and self._queue and not self._timer.isActive():
            self._timer.start()

    def _next(self) -> None:
        if not self._queue or self._archive is None:
            return
        key = self._queue.pop(0)
        try:
            data = self._archive.tile(*key)
        except Exception as err:  # a damaged archive: say so once, keep the editor working
            self._set_status(f"Map background: {self.path.name} cannot be read ({err})")
            data = None
        if data:
            self.tile_bytes.emit(key, bytes(data))
        else:
            self.tile_absent.emit(key)
        self._pump()

    @QtCore.Slot()
    def stop(self) -> None:
        super().stop()
        if self._archive is not None:
            self._archive.close()
            self._archive = None


class TileLoader(QtCore.QObject):
    """Owns the worker thread. Signals are delivered on the UI thread.

    Calls into the worker go through ``QMetaObject.invokeMethod`` by slot name: PySide connects a
    signal to a Python method as a plain callable run in the sender's thread, which would put
    the worker's work back on the UI thread.
    """

    tile_loaded = QtCore.Signal(object, QtGui.QImage)
    tile_absent = QtCore.Signal(object)
    status_changed = QtCore.Signal(str)
    #: the worker's bytes, re-emitted on the UI thread (a signal-to-signal hop) to be decoded there
    _tile_bytes = QtCore.Signal(object, bytes)

    def __init__(self, worker: TileWorker) -> None:
        super().__init__()
        self._thread = QtCore.QThread()
        self._thread.setObjectName("tile-loader")
        self.worker = worker
        worker.moveToThread(self._thread)
        worker.tile_bytes.connect(self._tile_bytes)
        self._tile_bytes.connect(self._decode)
        worker.tile_absent.connect(self.tile_absent)
        worker.status_changed.connect(self.status_changed)
        self._thread.start()
        self._call("start")

    def _decode(self, key: TileKey, data: bytes) -> None:
        image = decode(data)
        if image is None:
            self.tile_absent.emit(key)
        else:
            self.tile_loaded.emit(key, image)

    def _call(self, slot: str, blocking: bool = False) -> None:
        kind = QtCore.Qt.ConnectionType
        QtCore.QMetaObject.invokeMethod(self.worker, slot,
                                        kind.BlockingQueuedConnection if blocking else kind.QueuedConnection)

    def want(self, keys: list[TileKey]) -> None:
        self.worker.post_wish(list(keys))
        self._call("take_wish")

    def shutdown(self) -> None:
        if self._thread.isRunning():
            self._call("stop", blocking=True)
            self._thread.quit()
            self._thread.wait(5000)
