/** The recipes feature's public entry: what routes and other features use (eslint.config.js enforces it). */
export { useCreateRecipe } from './api/useCreateRecipe';
export { useNewRecipeVersion } from './api/useNewRecipeVersion';
export { useRecipe } from './api/useRecipe';
export { useRecipeTransition } from './api/useRecipeTransition';
export { useRecipes } from './api/useRecipes';
export { useUpdateRecipe } from './api/useUpdateRecipe';
export { RecipeDiffView } from './components/RecipeDiffView';
export { RecipeList } from './components/RecipeList';
export { ProvisionalBadge, RecipeStatusBadge } from './components/RecipeStatusBadge';
export { ReviewActions } from './components/ReviewActions';
export { ReviewQueueList } from './components/ReviewQueueList';
export { SettingsEditor } from './components/SettingsEditor';
