//! Drawing code shared by the browser canvas and SVG export. (Being built.)
