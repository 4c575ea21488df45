"""Qt-free processing: statistics and the cleaning tools, each a pure function returning a proposal."""
