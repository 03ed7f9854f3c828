//! Analysis fields as VTK XML documents (text, zlib-compressed binary arrays via vtkio):
//! gridded fields as image data (`.vti`), per-particle fields as poly data (`.vtp`), so they
//! open beside the run's snapshots in any VTK viewer.

use lamella_cells::Vector;
use vtkio::model::{
    Attribute, Attributes, ByteOrder, DataArray, DataSet, ElementType, Extent, IOBuffer,
    ImageDataPiece, Piece, PolyDataPiece, Version, VertexNumbers, Vtk,
};
use vtkio::xml::Compressor;

use crate::grid::Grid;

/// zlib level for the arrays (common practice: a middle level, fast and compact).
const COMPRESSION_LEVEL: u32 = 6;

/// A named field: one value per node or particle (`components` = 1) or interleaved vectors.
#[derive(Clone, Copy, Debug)]
pub struct Field<'a> {
    /// Array name (a trade word, with no spaces).
    pub name: &'a str,
    /// Components per tuple (1 for scalars, 3 for vectors).
    pub components: u32,
    /// The values, `components` per tuple.
    pub values: &'a [f64],
}

fn arrays(fields: &[Field<'_>], tuples: usize) -> Result<Vec<Attribute>, String> {
    fields
        .iter()
        .map(|f| {
            if f.components == 0 || f.values.len() != tuples * f.components as usize {
                return Err(format!(
                    "field {} has {} values for {tuples} tuples of {} components",
                    f.name,
                    f.values.len(),
                    f.components
                ));
            }
            let elem = if f.components == 3 {
                ElementType::Vectors
            } else {
                ElementType::Scalars {
                    num_comp: f.components,
                    lookup_table: None,
                }
            };
            Ok(Attribute::DataArray(DataArray {
                name: f.name.to_string(),
                elem,
                data: IOBuffer::F64(f.values.to_vec()),
            }))
        })
        .collect()
}

fn encode(data: DataSet) -> Result<String, String> {
    let vtk = Vtk {
        version: Version::new_xml(1, 0),
        title: String::new(),
        byte_order: ByteOrder::LittleEndian,
        data,
        file_path: None,
    };
    let xml = vtk
        .try_into_xml_format(Compressor::ZLib, COMPRESSION_LEVEL)
        .map_err(|err| format!("vtkio cannot encode the fields: {err}"))?;
    Ok(xml.to_string())
}

/// The `.vti` document of point fields on the nodes (cell centres) of `grid`.
pub fn image_document<V: Vector>(grid: &Grid<V>, fields: &[Field<'_>]) -> Result<String, String> {
    let d = grid.spacing();
    let spacing = [0, 1, 2].map(|a| if a < V::DIM { d.get(a) as f32 } else { 1.0 });
    let origin = [0, 1, 2].map(|a| {
        if a < V::DIM {
            (grid.lower.get(a) + 0.5 * d.get(a)) as f32
        } else {
            0.0
        }
    });
    let extent = Extent::Ranges(grid.cells.map(|n| 0..=(n as i32 - 1)));
    let piece = ImageDataPiece {
        extent: extent.clone(),
        data: Attributes {
            point: arrays(fields, grid.len())?,
            cell: Vec::new(),
        },
    };
    encode(DataSet::ImageData {
        extent,
        origin,
        spacing,
        meta: None,
        pieces: vec![Piece::Inline(Box::new(piece))],
    })
}

/// The `.vtp` document of per-particle fields at `positions` (one vertex per particle).
pub fn points_document<V: Vector>(positions: &[V], fields: &[Field<'_>]) -> Result<String, String> {
    let n = positions.len();
    let xyz: Vec<f64> = positions
        .iter()
        .flat_map(|p| (0..3).map(move |a| if a < V::DIM { p.get(a) } else { 0.0 }))
        .collect();
    let piece = PolyDataPiece {
        points: IOBuffer::F64(xyz),
        verts: Some(VertexNumbers::XML {
            connectivity: (0..n as u64).collect(),
            offsets: (1..=n as u64).collect(),
        }),
        lines: None,
        polys: None,
        strips: None,
        data: Attributes {
            point: arrays(fields, n)?,
            cell: Vec::new(),
        },
    };
    encode(DataSet::PolyData {
        meta: None,
        pieces: vec![Piece::Inline(Box::new(piece))],
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    #[test]
    fn image_document_round_trips_through_vtkio() {
        let grid = Grid::new(DVec2::ZERO, DVec2::new(2e-3, 1e-3), &[4, 2]).unwrap();
        let values: Vec<f64> = (0..8).map(|k| k as f64 * 0.125).collect();
        let text = image_document(
            &grid,
            &[Field {
                name: "volume_fraction_0",
                components: 1,
                values: &values,
            }],
        )
        .unwrap();
        assert!(text.contains("ImageData") && text.contains("volume_fraction_0"));
        let back = Vtk::parse_xml(text.as_bytes()).unwrap();
        let DataSet::ImageData {
            extent,
            spacing,
            pieces,
            ..
        } = back.data
        else {
            panic!("not image data")
        };
        assert_eq!(extent, Extent::Ranges([0..=3, 0..=1, 0..=0]));
        assert!((spacing[0] - 5e-4).abs() < 1e-9);
        let Piece::Inline(piece) = &pieces[0] else {
            panic!("piece not inline")
        };
        let Attribute::DataArray(array) = &piece.data.point[0] else {
            panic!("no array")
        };
        assert_eq!(array.data.clone().cast_into::<f64>().unwrap(), values);
    }

    #[test]
    fn mismatched_field_is_refused() {
        let pos = [DVec2::ZERO, DVec2::ONE];
        let err = points_document(
            &pos,
            &[Field {
                name: "ftle",
                components: 1,
                values: &[1.0],
            }],
        )
        .unwrap_err();
        assert!(err.contains("ftle has 1 values for 2 tuples"));
        assert!(
            points_document(
                &pos,
                &[Field {
                    name: "ftle",
                    components: 1,
                    values: &[1.0, 2.0]
                }]
            )
            .is_ok()
        );
    }
}
