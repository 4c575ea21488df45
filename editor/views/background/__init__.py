"""Map backgrounds: layers drawn under the track in the map view (web tiles, tile archives, and any
other layer that follows :class:`~editor.views.background.layer.BackgroundLayer`)."""
