"""Qt-free map-background core: Web Mercator tile maths, URL templates, the provider catalogue,
offline tile archives (MBTiles, PMTiles) and the warp of Web Mercator tiles into the map's local
transverse Mercator. The Qt layer (``editor.views.background``) fetches and draws; nothing here
touches the network or Qt."""
