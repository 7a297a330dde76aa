/** Speed of light in vacuum, m/s (exact, SI 2019). */
export const SPEED_OF_LIGHT_m_s = 299792458;
/** Planck constant, J s (exact, SI 2019). */
export const PLANCK_J_s = 6.62607015e-34;
