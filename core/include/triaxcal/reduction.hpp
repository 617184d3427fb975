#pragma once
// Reduction of raw triaxial readings to stresses and strains (compression positive, kPa, mm, N).

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// Axial strain from the axial displacement (shortening positive) since the data zero.
inline double axial_strain_from_displacement(double displacement, double displacement_zero, double reference_height) {
  return (displacement - displacement_zero) / reference_height;
}

/// Area of a specimen deforming as a right cylinder: A = A0 (1 - e_v) / (1 - e_a), from
/// V = A H with V = V0 (1 - e_v) and H = H0 (1 - e_a). Common practice (the right-cylinder
/// correction of e.g. ASTM D4767, BS 1377-8), no single source.
inline double corrected_area(double reference_area, double volumetric_strain, double axial_strain) {
  return reference_area * (1.0 - volumetric_strain) / (1.0 - axial_strain);
}

/// Deviator stress (kPa) from the deviator load (N) on the corrected area (mm^2): 1 N/mm^2 = 1000 kPa.
inline double deviator_from_load(double load, double area) { return 1000.0 * load / area; }

/// Membrane correction to the deviator stress (kPa), to be subtracted: dq = 4 E_m t_m e_a / D,
/// with E_m the membrane modulus (kPa), t_m its thickness (mm) and D the specimen diameter at the
/// data zero (mm). The compression-shell form of Henkel & Gilbert (1952), "The effect of the
/// rubber membrane on the measured triaxial compression strength of clay samples", Geotechnique
/// 3(1), as given in ASTM D4767 (membrane correction, Section 9).
inline double membrane_correction(double membrane_modulus, double membrane_thickness, double axial_strain,
                                  double diameter) {
  return 4.0 * membrane_modulus * membrane_thickness * axial_strain / diameter;
}

/// Void ratio after a volumetric strain e_v from a state of void ratio e0: e = e0 - (1 + e0) e_v.
inline double void_ratio_after(double e0, double volumetric_strain) { return e0 - (1.0 + e0) * volumetric_strain; }

}  // namespace triaxcal
