/** Speed of light in km/s, exact (SI definition of the metre). */
export const C_KMS = 299792.458;
