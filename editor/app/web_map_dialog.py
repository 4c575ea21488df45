"""Choosing a web map: a provider from the catalogue (with a key where one is needed) or a custom address."""
from __future__ import annotations

from dataclasses import dataclass

from PySide6 import QtWidgets

from ..tiles.catalogue import CatalogueEntry, catalogue, provider_template
from ..tiles.templates import TemplateError, TileTemplate, custom_template
from .background_settings import BackgroundSettings

#: Said once, the first time a web map is chosen.
PRIVACY_NOTE = ("A web map is downloaded while you look at it, so the tile server will see which area "
                "you are viewing.")


@dataclass
class WebMapChoice:
    template: TileTemplate
    provider: str  # catalogue name, "" for a custom address
    key: str = ""


class WebMapDialog(QtWidgets.QDialog):
    """Provider list, key field and custom address; :meth:`choice` validates and returns the pick."""

    def __init__(self, stored: BackgroundSettings, parent=None, entries: list[CatalogueEntry] | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Web map")
        self.stored = stored
        self.entries = entries if entries is not None else catalogue()
        layout = QtWidgets.QVBoxLayout(self)
        if not stored.told_about_privacy:
            note = QtWidgets.QLabel(PRIVACY_NOTE)
            note.setWordWrap(True)
            note.setObjectName("privacyNote")
            layout.addWidget(note)
        self.use_catalogue = QtWidgets.QRadioButton("A map from the list")
        self.use_custom = QtWidgets.QRadioButton("A tile address of your own")
        self.provider_box = QtWidgets.QComboBox()
        self.provider_box.setEditable(True)  # type to find one among hundreds
        self.provider_box.setInsertPolicy(QtWidgets.QComboBox.InsertPolicy.NoInsert)
        for entry in self.entries:
            label = entry.name + ("  (needs your key)" if entry.key_field else "")
            self.provider_box.addItem(label, entry.name)
        self.key_edit = QtWidgets.QLineEdit()
        self.key_edit.setPlaceholderText("Your key for this map service")
        self.url_edit = QtWidgets.QLineEdit(stored.custom_url)
        self.url_edit.setPlaceholderText("https://tiles.example.org/{z}/{x}/{y}.png  ({s} subdomains, {r} sharp tiles)")
        self.credit_edit = QtWidgets.QLineEdit(stored.custom_attribution)
        self.credit_edit.setPlaceholderText("Credit line the tile provider asks for")
        self.error_label = QtWidgets.QLabel("")
        self.error_label.setWordWrap(True)
        form = QtWidgets.QFormLayout()
        form.addRow(self.use_catalogue)
        form.addRow("Map", self.provider_box)
        form.addRow("Key", self.key_edit)
        form.addRow(self.use_custom)
        form.addRow("Address", self.url_edit)
        form.addRow("Credit", self.credit_edit)
        layout.addLayout(form)
        layout.addWidget(self.error_label)
        buttons = QtWidgets.QDialogButtonBox(QtWidgets.QDialogButtonBox.StandardButton.Ok
                                             | QtWidgets.QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self._accept)
        buttons.rejected.connect(self.reject)
        layout.addWidget(buttons)
        self.provider_box.currentIndexChanged.connect(self._provider_changed)
        self.use_custom.toggled.connect(self._mode_changed)
        index = self.provider_box.findData(stored.provider)
        self.provider_box.setCurrentIndex(max(index, 0))
        (self.use_custom if stored.provider == "" and stored.custom_url else self.use_catalogue).setChecked(True)
        self._provider_changed()
        self._mode_changed()

    def _entry(self) -> CatalogueEntry | None:
        name = self.provider_box.currentData()
        return next((e for e in self.entries if e.name == name), None)

    def _provider_changed(self) -> None:
        entry = self._entry()
        needs_key = entry is not None and entry.key_field is not None
        self.key_edit.setEnabled(needs_key and self.use_catalogue.isChecked())
        self.key_edit.setText(self.stored.key_for(entry.name) if entry is not None and needs_key else "")

    def _mode_changed(self) -> None:
        custom = self.use_custom.isChecked()
        self.provider_box.setEnabled(not custom)
        self.url_edit.setEnabled(custom)
        self.credit_edit.setEnabled(custom)
        self._provider_changed()

    def choice(self) -> WebMapChoice:
        """The chosen source; raises ``ValueError`` (with a message for the rider) when incomplete."""
        if self.use_custom.isChecked():
            return WebMapChoice(custom_template(self.url_edit.text(), self.credit_edit.text()), "")
        entry = self._entry()
        if entry is None:
            raise ValueError("Choose a map from the list.")
        key = self.key_edit.text().strip()
        return WebMapChoice(provider_template(entry.name, key or None), entry.name, key)

    def _accept(self) -> None:
        try:
            self.choice()
        except (TemplateError, ValueError) as err:
            self.error_label.setText(str(err))
            return
        self.accept()
