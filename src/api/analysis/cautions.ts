// Shown with every rate recommendation: advice on fertiliser or pesticide rates can hurt.
export const RECOMMENDATION_CAUTIONS: readonly string[] = [
  'These results summarise the trials in this workspace only; other soils, seasons and farms may respond differently.',
  'Any rate must respect the product label limits and local nutrient-management and environmental rules.',
  'Confirm a rate with local agronomic advice before using it.',
];
