/** Style sheets are bundled as text (webpack asset/source) and put into a <style> element by the page. */
declare module "*.css" {
  const text: string;
  export default text;
}
