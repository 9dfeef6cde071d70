import type { Recipe } from '@lamina/processing';

/**
 * The processing recipe for hyperbola fitting: the site's recipe without migration (it collapses the
 * hyperbolas this package fits, and needs the velocity it finds) and without the envelope step (the
 * detector takes signed traces and makes its own envelope).
 */
export function recipeForVelocity(recipe: Recipe): Recipe {
  return { ...recipe, steps: recipe.steps.filter((s) => s.step !== 'migration' && s.step !== 'envelope') };
}
