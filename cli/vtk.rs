//! VTK XML writers (through vtkio) and the `.pvd` collection file (written here: vtkio has no
//! writer for it).
//!
//! Array names carry their SI unit and contain no spaces (`E_V_per_m`, `B_T`), because VTK XML
//! has no field for units and legacy readers split names at spaces. Grids are RectilinearGrid
//! so coordinates stay f64 (ImageData stores origin and spacing as f32). Every writer returns
//! the bytes of the file; the caller writes them atomically.

use vtkio::model::{
    Attribute, Attributes, ByteOrder, CellType, Cells as VtkCells, Coordinates, DataSet, Extent,
    IOBuffer, Piece, PolyDataPiece, RectilinearGridPiece, UnstructuredGridPiece, Version,
    VertexNumbers, Vtk,
};

/// One named array of point or cell data: `n_comp` f64 values per point (or cell), interleaved.
#[derive(Debug, Clone)]
pub struct Array {
    /// Name with its unit and without spaces, e.g. `E_mag_V_per_m`.
    pub name: String,
    /// Components per tuple: 1 for scalars, 3 for vectors.
    pub n_comp: u32,
    /// The values, `n_comp` per tuple.
    pub values: Vec<f64>,
}

impl Array {
    /// A scalar array.
    pub fn scalars(name: &str, values: Vec<f64>) -> Self {
        Self {
            name: name.into(),
            n_comp: 1,
            values,
        }
    }

    /// A vector array (3 components per tuple).
    pub fn vectors(name: &str, values: Vec<f64>) -> Self {
        Self {
            name: name.into(),
            n_comp: 3,
            values,
        }
    }

    fn attribute(&self) -> Attribute {
        debug_assert!(!self.name.contains(' '), "VTK array name with a space");
        let base = if self.n_comp == 3 {
            Attribute::vectors(self.name.clone())
        } else {
            Attribute::scalars(self.name.clone(), self.n_comp)
        };
        base.with_data(IOBuffer::F64(self.values.clone()))
    }
}

fn to_bytes(data: DataSet, title: &str) -> anyhow::Result<Vec<u8>> {
    let vtk = Vtk {
        version: Version::XML { major: 1, minor: 0 },
        title: title.into(),
        byte_order: ByteOrder::LittleEndian,
        data,
        file_path: None,
    };
    let mut out = Vec::new();
    vtk.write_xml(&mut out)
        .map_err(|e| anyhow::anyhow!("cannot encode VTK XML: {e}"))?;
    Ok(out)
}

/// A RectilinearGrid (`.vtr`) on the coordinate lines `xs_m`, `ys_m`, `zs_m` (m) with point
/// data ordered x fastest, then y, then z (VTK's order).
pub fn rectilinear_grid(
    xs_m: &[f64],
    ys_m: &[f64],
    zs_m: &[f64],
    point_data: &[Array],
) -> anyhow::Result<Vec<u8>> {
    let n = xs_m.len() * ys_m.len() * zs_m.len();
    for a in point_data {
        anyhow::ensure!(
            a.values.len() == n * a.n_comp as usize,
            "VTK array {} has {} values for {n} points",
            a.name,
            a.values.len()
        );
    }
    // Extent::Ranges, not Dims: Dims writes one point too many into XML.
    let last = |v: &[f64]| v.len().saturating_sub(1) as i32;
    let extent = Extent::Ranges([0..=last(xs_m), 0..=last(ys_m), 0..=last(zs_m)]);
    let piece = RectilinearGridPiece {
        extent: extent.clone(),
        coords: Coordinates {
            x: IOBuffer::F64(xs_m.to_vec()),
            y: IOBuffer::F64(ys_m.to_vec()),
            z: IOBuffer::F64(zs_m.to_vec()),
        },
        data: Attributes {
            point: point_data.iter().map(Array::attribute).collect(),
            cell: Vec::new(),
        },
    };
    to_bytes(
        DataSet::RectilinearGrid {
            extent,
            meta: None,
            pieces: vec![Piece::Inline(Box::new(piece))],
        },
        "coilfield field grid",
    )
}

/// Kind of cells in a PolyData file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Cells {
    /// Polylines (`Lines`).
    Lines,
    /// Polygons (`Polys`).
    Polys,
}

/// Every point array holds `n_points` tuples and every cell array `n_cells`.
fn check_array_lengths(
    n_points: usize,
    n_cells: usize,
    point_data: &[Array],
    cell_data: &[Array],
) -> anyhow::Result<()> {
    for (arrays, n, what) in [
        (point_data, n_points, "point"),
        (cell_data, n_cells, "cell"),
    ] {
        for a in arrays {
            anyhow::ensure!(
                a.values.len() == n * a.n_comp as usize,
                "VTK {what} array {} has the wrong length",
                a.name
            );
        }
    }
    Ok(())
}

/// VTK's XML cell layout: the cells' point indices end to end, and where each cell ends.
fn flat_cells(cells: &[Vec<u64>]) -> (Vec<u64>, Vec<u64>) {
    let mut connectivity = Vec::with_capacity(cells.iter().map(Vec::len).sum());
    let mut offsets = Vec::with_capacity(cells.len());
    for c in cells {
        connectivity.extend_from_slice(c);
        offsets.push(connectivity.len() as u64);
    }
    (connectivity, offsets)
}

/// A PolyData (`.vtp`) of `points_m` (m) and cells given as lists of point indices.
pub fn poly_data(
    points_m: &[[f64; 3]],
    kind: Cells,
    cells: &[Vec<u64>],
    point_data: &[Array],
    cell_data: &[Array],
) -> anyhow::Result<Vec<u8>> {
    check_array_lengths(points_m.len(), cells.len(), point_data, cell_data)?;
    let (connectivity, offsets) = flat_cells(cells);
    let topology = Some(VertexNumbers::XML {
        connectivity,
        offsets,
    });
    let mut piece = PolyDataPiece {
        points: IOBuffer::F64(points_m.iter().flatten().copied().collect()),
        data: Attributes {
            point: point_data.iter().map(Array::attribute).collect(),
            cell: cell_data.iter().map(Array::attribute).collect(),
        },
        ..PolyDataPiece::default()
    };
    match kind {
        Cells::Lines => piece.lines = topology,
        Cells::Polys => piece.polys = topology,
    }
    to_bytes(
        DataSet::PolyData {
            meta: None,
            pieces: vec![Piece::Inline(Box::new(piece))],
        },
        "coilfield geometry",
    )
}

/// An UnstructuredGrid (`.vtu`) of triangles: `points_m` (m) and cells as three point indices
/// each, with point and cell arrays (the finite-element mesh).
pub fn unstructured_triangles(
    points_m: &[[f64; 3]],
    triangles: &[Vec<u64>],
    point_data: &[Array],
    cell_data: &[Array],
) -> anyhow::Result<Vec<u8>> {
    check_array_lengths(points_m.len(), triangles.len(), point_data, cell_data)?;
    let (connectivity, offsets) = flat_cells(triangles);
    let piece = UnstructuredGridPiece {
        points: IOBuffer::F64(points_m.iter().flatten().copied().collect()),
        cells: VtkCells {
            cell_verts: VertexNumbers::XML {
                connectivity,
                offsets,
            },
            types: vec![CellType::Triangle; triangles.len()],
        },
        data: Attributes {
            point: point_data.iter().map(Array::attribute).collect(),
            cell: cell_data.iter().map(Array::attribute).collect(),
        },
    };
    to_bytes(
        DataSet::UnstructuredGrid {
            meta: None,
            pieces: vec![Piece::Inline(Box::new(piece))],
        },
        "coilfield finite-element mesh",
    )
}

/// Escape the five XML special characters.
fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
        .replace('\'', "&apos;")
}

/// A ParaView data collection (`.pvd`): one `<DataSet>` per file, all at time step 0, each its
/// own part so viewers show them side by side. `files` are paths relative to the `.pvd`.
pub fn pvd(files: &[String]) -> Vec<u8> {
    let mut s = String::from(
        "<?xml version=\"1.0\"?>\n<VTKFile type=\"Collection\" version=\"0.1\" byte_order=\"LittleEndian\">\n  <Collection>\n",
    );
    for (part, file) in files.iter().enumerate() {
        s.push_str(&format!(
            "    <DataSet timestep=\"0\" part=\"{part}\" file=\"{}\"/>\n",
            xml_escape(file)
        ));
    }
    s.push_str("  </Collection>\n</VTKFile>\n");
    s.into_bytes()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_extent_has_one_point_per_coordinate() {
        let bytes = rectilinear_grid(
            &[0.0, 1.0, 2.0],
            &[0.0, 0.5],
            &[0.25],
            &[Array::scalars("E_mag_V_per_m", vec![1.0; 6])],
        )
        .unwrap();
        let text = String::from_utf8(bytes).unwrap();
        assert!(text.contains("WholeExtent=\"0 2 0 1 0 0\""), "{text}");
        assert!(text.contains("Name=\"E_mag_V_per_m\""));
    }

    #[test]
    fn wrong_lengths_are_refused() {
        assert!(
            rectilinear_grid(&[0.0], &[0.0], &[0.0], &[Array::vectors("B_T", vec![1.0])]).is_err()
        );
    }

    #[test]
    fn pvd_lists_every_file_escaped() {
        let text = String::from_utf8(pvd(&["a.vtp".into(), "b&c.vtp".into()])).unwrap();
        assert!(text.contains("part=\"0\" file=\"a.vtp\""));
        assert!(text.contains("part=\"1\" file=\"b&amp;c.vtp\""));
    }
}
